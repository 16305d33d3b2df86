import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { addClick, generateNoise, generateSine, mixInto, seededRandom } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { soxDir } from './helpers';

// Crackle has no standard metric (REFERENCES.md): the checks use impulses whose number, times and
// sizes are known by construction, and clean captures (made by sox) that must report none.

const dir = soxDir();
afterAll(() => dir.remove());

const FS = 48000;

/** Tone at −10 dBFS plus −100 dBFS Gaussian noise: the background clicks sit on. */
function background(seconds: number, seed: number): Float64Array {
  const x = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds })[0]!;
  return mixInto(x, generateNoise({ sampleRate: FS, levelDbfs: -100, seconds, seed })[0]!);
}

/** `count` click positions at least `gapS` apart, seeded. */
function positions(count: number, frames: number, gapS: number, seed: number): number[] {
  const rnd = seededRandom(seed);
  const out: number[] = [];
  while (out.length < count) {
    const f = 1000 + Math.floor(rnd() * (frames - 2000));
    if (out.every((g) => Math.abs(g - f) >= gapS * FS)) out.push(f);
  }
  return out.sort((a, b) => a - b);
}

describe('click detection', () => {
  it('25 single-sample impulses between −60 and −20 dBFS: count, times and peaks', () => {
    const x = background(3, 1);
    const rnd = seededRandom(99);
    const at = positions(25, x.length, 0.02, 5);
    const peaks = at.map(() => -60 + 40 * rnd());
    at.forEach((frame, i) => addClick(x, FS, { frame, amplitude: 10 ** (peaks[i]! / 20) * (i % 2 ? 1 : -1) }));
    const c = analyzeWavBytes(encodeWav([x], FS, 24)).channels[0]!;
    expect(c.clicks.count).toBe(25);
    expect(c.clicks.perMinute).toBeCloseTo(25 / (3 / 60), 6);
    expect(c.clicks.events).toHaveLength(25);
    c.clicks.events.forEach((e, i) => {
      // One sample is 0.02 ms; the event time is the detector's peak, taken back by its 2-sample delay.
      expect(Math.abs(e.timeS - at[i]! / FS)).toBeLessThanOrEqual(1 / FS);
      // The impulse peak is estimated as the mean of the forward and backward prediction errors
      // (analysis/clicks.ts). Their noise is the −100 dBFS noise through the predictors, about
      // 1.5·10⁻⁵ each near a −10 dBFS tone: up to 3 σ of that is 0.25 dB at −60 dBFS (computed:
      // 20·lg(1 + 3·1.5·10⁻⁵/√2 / 10⁻³) ≈ 0.27 dB), so the bound is 0.3 dB.
      expect(Math.abs(e.peakDbfs! - peaks[i]!)).toBeLessThan(0.3);
      // One sample long; the result rounds durations to 1 µs.
      expect(Math.abs(e.durationMs - 1000 / FS)).toBeLessThanOrEqual(0.0005);
    });
  });

  it('12 bursts (0.5 ms decaying oscillations, like a dirty contact) count once each', () => {
    const x = background(2, 2);
    const at = positions(12, x.length, 0.03, 6);
    at.forEach((frame) => addClick(x, FS, { frame, amplitude: 0.01, shape: 'burst' }));
    const c = analyzeWavBytes(encodeWav([x], FS, 24)).channels[0]!;
    expect(c.clicks.count).toBe(12);
    c.clicks.events.forEach((e, i) => expect(Math.abs(e.timeS - at[i]! / FS)).toBeLessThan(0.001));
  });

  it('clean captures made by sox report 0: tone + white noise, pink noise, dithered 16-bit tone', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('tone.wav'), 'synth', '3', 'sine', '997', 'vol', '0.3');
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('wn.wav'), 'synth', '3', 'whitenoise', 'vol', '0.0001');
    dir.sox('-m', '-v', '1', dir.path('tone.wav'), '-v', '1', dir.path('wn.wav'), dir.path('clean.wav'));
    dir.sox('-n', '-r', '96000', '-b', '24', '-c', '2', dir.path('pink.wav'), 'synth', '3', 'pinknoise', 'vol', '0.5');
    dir.sox('-n', '-r', '44100', '-b', '16', dir.path('d16.wav'), 'synth', '3', 'sine', '1000', 'vol', '0.5');
    for (const name of ['clean.wav', 'pink.wav', 'd16.wav']) {
      const r = analyzeWavBytes(dir.read(name));
      for (const c of r.channels) expect(c.clicks.count, name).toBe(0);
    }
  });

  it('clicks in one channel of eight are reported there only', () => {
    const channels = Array.from({ length: 8 }, (_, c) => background(1, 10 + c));
    for (const frame of [9000, 21000, 33000]) addClick(channels[5]!, FS, { frame, amplitude: 0.003 });
    const r = analyzeWavBytes(encodeWav(channels, FS, 24));
    expect(r.channels.map((c) => c.clicks.count)).toEqual([0, 0, 0, 0, 0, 3, 0, 0]);
  });

  it('more clicks than are listed: full count, 200 events, marked truncated', () => {
    const x = generateNoise({ sampleRate: 8000, levelDbfs: -90, seconds: 12 })[0]!;
    for (let i = 0; i < 300; i++) addClick(x, 8000, { frame: 200 + i * 320, amplitude: 0.01 });
    const c = analyzeWavBytes(encodeWav([x], 8000, 24)).channels[0]!;
    expect(c.clicks.count).toBe(300);
    expect(c.clicks.events).toHaveLength(200);
    expect(c.clicks.eventsTruncated).toBe(true);
  });
});
