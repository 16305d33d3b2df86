import { describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { addClick, generateLogSweep, generateNoise, generateSine, mixInto, seededGaussian } from '../../analysis/generate';
import { SpectrogramAccumulator, SPECTROGRAM_COLUMNS, SPECTROGRAM_ROWS } from '../../analysis/spectrogram';
import { encodeWav } from '../../analysis/wav-encode';
import type { Spectrogram } from '../../shared/analysis-result';
import { base64ToBytes, bytesToBase64 } from '../../shared/byte-text';
import { spectrogramGrid, spectrogramRowHz, spectrogramRowOf } from '../../shared/spectrogram';
import { levelColour, relativeLuminance } from '../../shared/level-colours';

const FS = 48_000;

/** Feeds planar samples in decoder-sized blocks, as analysis/analyze.ts does. */
function picture(x: Float64Array[], sampleRate = FS, block = 8192): Spectrogram {
  const acc = new SpectrogramAccumulator({ sampleRate, channels: x.length, totalFrames: x[0]!.length });
  for (let at = 0; at < x[0]!.length; at += block) {
    const length = Math.min(block, x[0]!.length - at);
    acc.push(x.map((c) => c.subarray(at, at + length)), at, length);
  }
  return acc.result()!;
}

const cell = (s: Spectrogram, db: Float32Array, column: number, row: number) => db[column * s.rows + row]!;
const loudestRow = (s: Spectrogram, db: Float32Array, column: number) => {
  let best = 0;
  for (let f = 1; f < s.rows; f++) if (cell(s, db, column, f) > cell(s, db, column, best)) best = f;
  return best;
};

describe('spectrogram', () => {
  it('a steady sine reads its own level in its row (AES17 dBFS), 1 dB for scalloping and steps', () => {
    const x = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -20, seconds: 4 });
    const s = picture(x);
    const { db } = spectrogramGrid(s, 0);
    const row = spectrogramRowOf(s, 997);
    for (const column of [5, Math.floor(s.columns / 2), s.columns - 5]) {
      expect(loudestRow(s, db, column)).toBe(row);
      // Blackman-Harris 4-term scallop loss is 0.83 dB at worst (Harris 1978, Table 1); 0.3 dB half-step.
      expect(cell(s, db, column, row)).toBeGreaterThan(-20 - 0.83 - 0.3);
      expect(cell(s, db, column, row)).toBeLessThan(-20 + 0.3);
    }
  });

  it("a log sweep's ridge lies on the swept frequency within one row or one FFT bin at known times", () => {
    // f(t) = f1·(f2/f1)^(t/T) for the exponential sweep (analysis/generate.ts phase law).
    const [f1, f2, T] = [100, 10_000, 60];
    const x = generateLogSweep({ sampleRate: FS, startHz: f1, endHz: f2, levelDbfs: -6, seconds: T });
    const s = picture(x);
    const { db } = spectrogramGrid(s, 0);
    let checked = 0;
    for (let column = 10; column < s.columns - 10; column += 10) {
      const t = (column + 0.5) * s.columnSeconds;
      const hz = f1 * (f2 / f1) ** (t / T);
      const ridge = loudestRow(s, db, column);
      // Low rows are narrower than an FFT bin (fs/frameSize): there the bin is the resolution.
      const ridgeHz = Math.sqrt(spectrogramRowHz(s, ridge) * spectrogramRowHz(s, ridge + 1));
      const near = Math.abs(ridge - spectrogramRowOf(s, hz)) <= 1 || Math.abs(ridgeHz - hz) <= FS / s.frameSize;
      expect(near, `column ${column} at ${t.toFixed(2)} s: ridge ${ridgeHz.toFixed(0)} Hz, sweep ${hz.toFixed(0)} Hz`).toBe(true);
      checked++;
    }
    expect(checked).toBeGreaterThan(15);
  });

  it('an impulse shows as a broadband column at its time; columns away from it stay quiet', () => {
    const seconds = 20;
    const x = generateNoise({ sampleRate: FS, levelDbfs: -110, seconds, seed: 3 })[0]!;
    mixInto(x, generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds })[0]!);
    const clickAt = Math.round(12.345 * FS);
    addClick(x, FS, { frame: clickAt, amplitude: 0.05 });
    const s = picture([x]);
    const { db } = spectrogramGrid(s, 0);
    const column = Math.floor(clickAt / FS / s.columnSeconds);
    const toneRow = spectrogramRowOf(s, 997);
    // Windowed at its centre, a single-sample impulse of 0.05 reads 20·lg(2·0.05/Σw) dBFS in every bin
    // (computed: Σw = 0.35875·4096 for the 4-term window, so −83.4 dBFS).
    const expected = 20 * Math.log10((2 * 0.05) / (0.35875 * s.frameSize));
    const broadband = (c: number) => {
      let rows = 0;
      for (let f = 0; f < s.rows; f++) if (Math.abs(f - toneRow) > 6 && cell(s, db, c, f) > expected - 3) rows++;
      return rows;
    };
    expect(broadband(column)).toBe(s.rows - 13);
    for (const away of [column - 4, column + 4, 10, s.columns - 10]) expect(broadband(away), `column ${away}`).toBe(0);
  });

  it('stays 240 × 96 cells per channel for a 20-minute stereo capture fed in blocks', () => {
    const fs = 96_000;
    const totalFrames = 20 * 60 * fs;
    const gauss = seededGaussian(7);
    const block = 8192;
    const noise = [new Float64Array(block).map(() => 0.001 * gauss()), new Float64Array(block).map(() => 0.001 * gauss())];
    const acc = new SpectrogramAccumulator({ sampleRate: fs, channels: 2, totalFrames });
    for (let at = 0; at < totalFrames; at += block) acc.push(noise, at, Math.min(block, totalFrames - at));
    const s = acc.result()!;
    expect([s.columns, s.rows]).toEqual([SPECTROGRAM_COLUMNS, SPECTROGRAM_ROWS]);
    expect(s.columnSeconds).toBeCloseTo(5, 9);
    expect(s.channels.map((c) => base64ToBytes(c.levels).length)).toEqual([240 * 96, 240 * 96]);
    // Two channels of 23 040 one-byte cells as base64 (4 characters per 3 bytes) plus the axis fields.
    expect(JSON.stringify(s).length).toBeLessThan(2 * 30_720 + 1000);
    // White noise of σ = 0.001 lands in every cell: no column left empty.
    const { db } = spectrogramGrid(s, 1);
    expect(Math.min(...db)).toBeGreaterThan(s.floorDb);
  });

  it('short captures get fewer columns, never finer than half a frame', () => {
    const x = generateSine({ sampleRate: FS, frequencyHz: 440, levelDbfs: -6, seconds: 0.5 });
    const s = picture(x);
    expect(s.columns).toBe(Math.floor((0.5 * FS) / (s.frameSize / 2)));
  });

  it('fed alone, it paints exactly the picture the analysis pass paints (the same screen, the same frames)', () => {
    // Stand-alone, the accumulator screens the samples itself; in the pass the click screen's
    // figures come in from outside. Both must find the same transient frames.
    const seconds = 6;
    const x = generateNoise({ sampleRate: FS, levelDbfs: -100, seconds, seed: 5 })[0]!;
    mixInto(x, generateSine({ sampleRate: FS, frequencyHz: 440, levelDbfs: -12, seconds })[0]!);
    for (const at of [0.5, 2.25, 4.8]) addClick(x, FS, { frame: Math.round(at * FS), amplitude: 0.02 });
    const alone = picture([x]);
    const inPass = analyzeWavBytes(encodeWav([x], FS, 'float64')).spectrogram!;
    expect(alone).toEqual(inPass);
    // And the clicks are there: near the top of the band (far above the tone's leakage and the
    // noise) every column within a frame of a click is loud, and no other.
    const clicks = [0.5, 2.25, 4.8];
    const { db } = spectrogramGrid(alone, 0);
    const frameS = alone.frameSize / FS;
    for (let c = 0; c < alone.columns; c++) {
      const from = c * alone.columnSeconds;
      const to = from + alone.columnSeconds;
      const near = clicks.some((t) => t > from - frameS && t < to + frameS);
      const onClick = clicks.some((t) => t >= from - frameS / 2 && t <= to + frameS / 2);
      const loud = cell(alone, db, c, alone.rows - 2) > -110;
      if (loud) expect(near, `column ${c} at ${from.toFixed(3)} s`).toBe(true);
      if (onClick) expect(loud, `column ${c} at ${from.toFixed(3)} s`).toBe(true);
    }
  });

  it('is part of the analysis result, one picture per channel', () => {
    const x = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 2, channels: 2, drivenChannels: [0] });
    const r = analyzeWavBytes(encodeWav(x, FS, 24));
    expect(r.spectrogram?.channels.map((c) => c.index)).toEqual([0, 1]);
    const row = spectrogramRowOf(r.spectrogram!, 997);
    const left = spectrogramGrid(r.spectrogram!, 0).db;
    expect(loudestRow(r.spectrogram!, left, 3)).toBe(row);
    expect(spectrogramRowHz(r.spectrogram!, r.spectrogram!.rows)).toBeCloseTo(FS / 2, 6);
  });

  it('base64 round-trips and matches Node’s own encoder (an independent implementation)', () => {
    for (const n of [0, 1, 2, 3, 4, 5, 1000, 30_721]) {
      const bytes = Uint8Array.from({ length: n }, (_, i) => (i * 151 + 7) & 255);
      const text = bytesToBase64(bytes);
      expect(text).toBe(Buffer.from(bytes).toString('base64'));
      expect(Array.from(base64ToBytes(text))).toEqual(Array.from(bytes));
    }
    expect(() => base64ToBytes('ab$=')).toThrow(/not base64/);
  });
});

describe('level colour scale', () => {
  it('gets lighter at every step (reads in greyscale print) from dark to light', () => {
    // WCAG 2 relative luminance, monotonic along the ramp: 101 points.
    const lum = Array.from({ length: 101 }, (_, i) => relativeLuminance(levelColour(i / 100)));
    for (let i = 1; i < lum.length; i++) expect(lum[i]!, `step ${i}`).toBeGreaterThan(lum[i - 1]!);
    // WCAG contrast ratio between the ends, (L1 + 0.05) / (L2 + 0.05): far above the 4.5 text minimum.
    expect((lum[100]! + 0.05) / (lum[0]! + 0.05)).toBeGreaterThan(10);
  });
});
