import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { AnalyzeOptionsError, analyzeWavBytes, analyzeWavStream } from '../../analysis/analyze';
import { addClick, generateNoise, generateSine, mixInto } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { MAX_CHANNELS, MAX_SAMPLE_RATE, MIN_SAMPLE_RATE, readWavInfo, WavFormatError } from '../../analysis/wav-header';
import { analysisResultSchema } from '../../shared/analysis-result';

// Property checks with fast-check (seeded, so a failure reproduces).

const small = (format: 16 | 24 | 'float32', channels: number, extensible: boolean): Uint8Array =>
  encodeWav(generateSine({ sampleRate: 8000, frequencyHz: 440, levelDbfs: -6, seconds: 0.01, channels }), 8000, format, { extensible });

const seeds = [small(16, 2, false), small(24, 1, true), small('float32', 3, true)];

const mutated = fc
  .record({
    seed: fc.integer({ min: 0, max: seeds.length - 1 }),
    edits: fc.array(fc.record({ at: fc.nat({ max: 90 }), value: fc.integer({ min: 0, max: 255 }) }), { minLength: 1, maxLength: 6 }),
    cut: fc.option(fc.nat({ max: 400 })),
  })
  .map(({ seed, edits, cut }) => {
    const b = seeds[seed]!.slice();
    for (const e of edits) if (e.at < b.length) b[e.at] = e.value;
    return cut === null ? b : b.subarray(0, Math.min(cut, b.length));
  });

describe('fuzzing the reader', () => {
  it('10 000 damaged headers: a consistent WavInfo or a WavFormatError, nothing else', () => {
    const outcomes = { read: 0, refused: new Set<string>() };
    fc.assert(
      fc.property(mutated, (bytes) => {
        try {
          const info = readWavInfo(bytes, { fileSize: bytes.length });
          outcomes.read++;
          expect(info.channels).toBeGreaterThanOrEqual(1);
          expect(info.channels).toBeLessThanOrEqual(MAX_CHANNELS);
          expect(info.sampleRate).toBeGreaterThanOrEqual(MIN_SAMPLE_RATE);
          expect(info.sampleRate).toBeLessThanOrEqual(MAX_SAMPLE_RATE);
          expect(info.frames * info.blockAlign).toBe(info.dataBytes);
          expect(info.dataOffset + info.dataBytes).toBeLessThanOrEqual(bytes.length);
        } catch (e) {
          if (!(e instanceof WavFormatError)) throw e;
          outcomes.refused.add(e.code);
        }
      }),
      { numRuns: 10_000, seed: 20240601 },
    );
    // Both branches ran: some damage is harmless (a byte in the rate), most is caught, variously.
    expect(outcomes.read).toBeGreaterThan(100);
    expect(outcomes.refused.size).toBeGreaterThan(8);
  });

  it('400 damaged files through the whole analysis: a schema-valid result or a WavFormatError', () => {
    let analysed = 0;
    fc.assert(
      fc.property(mutated, (bytes) => {
        try {
          analysisResultSchema.parse(analyzeWavBytes(bytes));
          analysed++;
        } catch (e) {
          if (!(e instanceof WavFormatError || e instanceof AnalyzeOptionsError)) throw e;
        }
      }),
      { numRuns: 400, seed: 7 },
    );
    expect(analysed).toBeGreaterThan(10);
  });
});

describe('streaming gives the same figures as the whole file', () => {
  const fs = 48000;
  const [l, r] = generateSine({ sampleRate: fs, frequencyHz: 997, levelDbfs: -10, seconds: 1.2, channels: 2, drivenChannels: [0] });
  mixInto(r!, generateSine({ sampleRate: fs, frequencyHz: 997, levelDbfs: -70, seconds: 1.2 })[0]!);
  mixInto(l!, generateNoise({ sampleRate: fs, levelDbfs: -100, seconds: 1.2, seed: 3 })[0]!);
  for (const at of [10_000, 30_000, 50_000]) addClick(l!, fs, { frame: at, amplitude: 0.02 });
  const bytes = encodeWav([l!, r!], fs, 24);
  const whole = analyzeWavBytes(bytes);

  async function* chunked(sizes: number[]): AsyncGenerator<Uint8Array> {
    let at = 0;
    for (let i = 0; at < bytes.length; i++) {
      const n = sizes[i % sizes.length]!;
      // A fresh copy each time, as a network stream would hand over.
      yield bytes.slice(at, at + n);
      at += n;
    }
  }

  it('for any chunking, including 1-byte chunks through the header (30 random splits)', async () => {
    expect(whole.channels[0]!.clicks.count).toBe(3);
    await fc.assert(
      fc.asyncProperty(fc.array(fc.integer({ min: 1, max: 70_000 }), { minLength: 1, maxLength: 8 }), async (sizes) => {
        const streamed = await analyzeWavStream(chunked(sizes));
        expect(streamed).toEqual(whole);
      }),
      { numRuns: 30, seed: 11 },
    );
    expect(await analyzeWavStream(chunked([1, 2, 3, 5, 7, 11, 13]))).toEqual(whole);
  });

  it('the result survives a JSON round trip unchanged (no NaN or Infinity)', () => {
    expect(JSON.parse(JSON.stringify(whole))).toEqual(whole);
    expect(analysisResultSchema.parse(whole)).toEqual(whole);
  });
});
