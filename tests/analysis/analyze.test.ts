import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { AnalyzeOptionsError, analyzeWavBytes, ENGINE_VERSION } from '../../analysis/analyze';
import { generateNoise, generateSine } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { analysisResultSchema } from '../../shared/analysis-result';
import { soxDir } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

describe('result shape', () => {
  it('stereo tone: schema-valid, plot data within its bounds, small enough for a database row', () => {
    dir.sox('-n', '-r', '96000', '-b', '24', '-c', '2', dir.path('st.wav'), 'synth', '2', 'sine', '997', 'vol', '0.3');
    const r = analyzeWavBytes(dir.read('st.wav'));
    analysisResultSchema.parse(r);
    expect(r.engineVersion).toBe(ENGINE_VERSION);
    expect(r.file).toEqual({
      container: 'RIFF', format: 'pcm', extensible: true, sampleRate: 96000, bitsPerSample: 24,
      validBitsPerSample: 24, channels: 2, frames: 192000, durationS: 2,
    });
    for (const c of r.channels) {
      expect(c.spectrum.frequencyHz.length).toBeGreaterThan(200);
      expect(c.spectrum.frequencyHz.length).toBeLessThanOrEqual(400);
      expect(c.spectrum.levelDbfs).toHaveLength(c.spectrum.frequencyHz.length);
      expect(c.waveform.min).toHaveLength(1000);
      expect(c.waveform.pointSeconds).toBeCloseTo(0.002, 9);
      // The fundamental marker sits where the tone is, at its level.
      const f = c.spectrum.markers.find((m) => m.kind === 'fundamental')!;
      expect(f.frequencyHz).toBeCloseTo(997, 2);
      expect(f.levelDbfs!).toBeCloseTo(20 * Math.log10(0.3), 2);
      // Highest plotted point is the tone, at its level within the window's 0.7 dB scallop loss.
      expect(Math.max(...c.spectrum.levelDbfs)).toBeGreaterThan(20 * Math.log10(0.3) - 0.8);
    }
    expect(JSON.stringify({ ...r, spectrogram: null }).length).toBeLessThan(60_000);
    // The spectrogram's size is fixed by its cell count (one byte a cell, base64), never by the length.
    const s = r.spectrogram!;
    expect(JSON.stringify(s).length).toBeLessThan(s.channels.length * Math.ceil((s.columns * s.rows) / 3) * 4 + 1000);
  });

  it('very short captures: levels only, spectral figures null, with a warning', () => {
    const [x] = generateSine({ sampleRate: 48000, frequencyHz: 997, levelDbfs: -6, seconds: 0.001 });
    const r = analyzeWavBytes(encodeWav([x!], 48000, 16));
    analysisResultSchema.parse(r);
    expect(r.file.frames).toBe(48);
    expect(r.channels[0]!.rmsDbfs).not.toBeNull();
    expect(r.channels[0]!.thdPct).toBeNull();
    expect(r.channels[0]!.spectrum.frequencyHz).toEqual([]);
    expect(r.warnings.join(' ')).toMatch(/too short/);
  });

  it('digital silence: no dB value for zero, null rather than −Infinity', () => {
    const r = analyzeWavBytes(encodeWav([new Float64Array(48000)], 48000, 24));
    const c = r.channels[0]!;
    expect(r.stimulus).toBe('silence');
    expect(c.rmsDbfs).toBeNull();
    expect(c.peakDbfs).toBeNull();
    expect(c.noiseDbfs).toBeNull();
    expect(c.clicks.count).toBe(0);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
  });
});

describe('stimulus', () => {
  it('detected: tone, silence, programme; or given', () => {
    const fs = 48000;
    const tone = encodeWav(generateSine({ sampleRate: fs, frequencyHz: 440, levelDbfs: -20, seconds: 2 }), fs, 24);
    const quiet = encodeWav(generateNoise({ sampleRate: fs, levelDbfs: -90, seconds: 2 }), fs, 24);
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('pink.wav'), 'synth', '2', 'pinknoise', 'vol', '0.3');
    expect(analyzeWavBytes(tone).stimulus).toBe('tone');
    expect(analyzeWavBytes(quiet).stimulus).toBe('silence');
    const programme = analyzeWavBytes(dir.read('pink.wav'));
    expect(programme.stimulus).toBe('programme');
    expect(programme.channels[0]!.noiseDbfs).toBeNull();
    const told = analyzeWavBytes(tone, { stimulus: 'silence' });
    expect(told).toMatchObject({ stimulus: 'silence', stimulusSource: 'given' });
    expect(told.channels[0]!.fundamentalHz).toBeNull();
  });

  it('expected tone frequency: a weaker tone is found beside a stronger one', () => {
    const fs = 48000;
    const [a] = generateSine({ sampleRate: fs, frequencyHz: 440, levelDbfs: -10, seconds: 2 });
    const [b] = generateSine({ sampleRate: fs, frequencyHz: 3000, levelDbfs: -30, seconds: 2 });
    const bytes = encodeWav([a!.map((v, i) => v + b![i]!)], fs, 24);
    expect(analyzeWavBytes(bytes).channels[0]!.fundamentalHz!).toBeCloseTo(440, 2);
    expect(analyzeWavBytes(bytes, { toneHz: 3000 }).channels[0]!.fundamentalHz!).toBeCloseTo(3000, 2);
  });
});

describe('options', () => {
  const bytes = encodeWav(generateSine({ sampleRate: 48000, frequencyHz: 997, levelDbfs: -6, seconds: 0.5, channels: 2 }), 48000, 16);
  const bad: [string, object, RegExp][] = [
    ['mains other than 50/60', { mainsHz: 55 }, /mains frequency must be 50 or 60/],
    ['driven channel missing from the file', { drivenChannel: 2 }, /drivenChannel 2 does not exist in a 2-channel capture/],
    ['negative calibration', { voltsAtFullScale: -1 }, /voltsAtFullScale/],
    ['unknown option', { gain: 3 }, /gain|Unrecognized/],
    ['unknown stimulus', { stimulus: 'noise' }, /stimulus/],
  ];
  for (const [what, options, message] of bad) {
    it(`refused: ${what}`, () => {
      expect(() => analyzeWavBytes(bytes, options as never)).toThrow(AnalyzeOptionsError);
      expect(() => analyzeWavBytes(bytes, options as never)).toThrow(message);
    });
  }
});

describe('synthetic samples (samples-synthetic/, figures known by construction — see its README)', () => {
  const sample = (name: string, options = {}) =>
    analyzeWavBytes(new Uint8Array(readFileSync(join(import.meta.dirname, '../../samples-synthetic', name))), options);

  it('demo job: clean at the input socket, crackle and 30 dB separation at the selector output, fixed after', () => {
    const socket = sample('demo-before-input-socket.wav');
    const before = sample('demo-before-selector-out.wav');
    const after = sample('demo-after-selector-out.wav');
    expect(socket.separation[0]!.db!).toBeCloseTo(80, 0);
    expect(socket.channels.map((c) => c.clicks.count)).toEqual([0, 0]);
    expect(before.separation[0]!.db!).toBeCloseTo(30, 1);
    expect(before.channels.map((c) => c.clicks.count)).toEqual([36, 0]);
    expect(before.channels[0]!.hum.detected).toBe(true);
    expect(before.mainsHz).toBe(50);
    expect(after.separation[0]!.db!).toBeCloseTo(70, 0);
    expect(after.channels.map((c) => c.clicks.count)).toEqual([0, 0]);
    expect(after.channels[0]!.thdPct!).toBeLessThan(0.01);
    expect(after.channels[0]!.hum.detected).toBe(false);
  });

  it('the single-effect samples read as their README says', () => {
    expect(sample('tone-997hz-harmonics.wav').channels[0]!.thdPct!).toBeCloseTo(1.118, 3);
    expect(sample('tone-997hz-clicks.wav').channels[0]!.clicks.count).toBe(12);
    expect(sample('crosstalk-left-driven.wav').separation[0]!.db!).toBeCloseTo(60, 1);
    expect(sample('hum-50hz.wav').channels[0]!.humDbfs!).toBeCloseTo(-68.69, 1);
    const sweep = sample('sweep-10hz-20khz.wav').sweep!.channels[0]!;
    expect(sweep.lowMinus3dbHz! / 40).toBeCloseTo(1, 1);
    expect(sweep.highMinus3dbHz! / 15000).toBeCloseTo(1, 2);
  });
});
