import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { soxDir } from './helpers';

// Channel separation, narrow-band at the test tone: files built with sox, where the leak into the
// undriven channel is set by sox's own `vol` ratio — 60 dB means vol 0.5 against 0.0005.

const dir = soxDir();
afterAll(() => dir.remove());

/** Stereo capture: tone in `left` at vol a, same tone in right at vol b, plus white noise. */
function capture(name: string, a: number, b: number, noise: number): Uint8Array {
  const part = (file: string, vol: number, seed: string): void => {
    dir.sox('-R', '-n', '-r', '48000', '-b', '32', '-e', 'floating-point', dir.path(file), 'synth', '3', 'sine', '997', 'vol', String(vol));
    dir.sox('-R', '-n', '-r', '48000', '-b', '32', '-e', 'floating-point', dir.path(`n${seed}.wav`), 'synth', '3', 'whitenoise', 'vol', String(noise));
    dir.sox('-m', '-v', '1', dir.path(file), '-v', '1', dir.path(`n${seed}.wav`), dir.path(`m${seed}.wav`));
  };
  part('a.wav', a, 'a');
  part('b.wav', b, 'b');
  dir.sox('-M', dir.path('ma.wav'), dir.path('mb.wav'), '-b', '24', dir.path(name));
  return dir.read(name);
}

describe('channel separation', () => {
  it('60 dB by construction (sox vol 0.5 vs 0.0005), driven channel detected', () => {
    const r = analyzeWavBytes(capture('sep60.wav', 0.5, 0.0005, 0.00001));
    expect(r.drivenChannel).toBe(0);
    expect(r.drivenSource).toBe('detected');
    expect(r.separation).toHaveLength(1);
    const s = r.separation[0]!;
    expect(s).toMatchObject({ driven: 0, other: 1, noiseLimited: false });
    // Tone 60 dB down stands ~50 dB over −106 dBFS noise in its 17 bins: ±0.05 dB.
    expect(Math.abs(s.db! - 60)).toBeLessThan(0.05);
    expect(Math.abs(s.frequencyHz - 997)).toBeLessThan(0.01);
  });

  it('driven channel given: right driven, left leaking 40 dB down', () => {
    const r = analyzeWavBytes(capture('sep40.wav', 0.005, 0.5, 0.00001), { drivenChannel: 1 });
    expect(r.drivenSource).toBe('given');
    const s = r.separation[0]!;
    expect(s).toMatchObject({ driven: 1, other: 0 });
    expect(Math.abs(s.db! - 40)).toBeLessThan(0.05);
  });

  it('a leak buried in noise is flagged noise-limited (the figure is then a lower bound)', () => {
    // Leak 120 dB down (−126 dBFS) under noise at −80 dBFS: nothing to measure.
    const s = analyzeWavBytes(capture('sepnoise.wav', 0.5, 0.0000005, 0.0001)).separation[0]!;
    expect(s.noiseLimited).toBe(true);
    expect(s.db!).toBeLessThan(120);
  });

  it('both channels driven: no separation figure unless a driven channel is given', () => {
    const bytes = capture('both.wav', 0.5, 0.4, 0.00001);
    const auto = analyzeWavBytes(bytes);
    expect(auto.separation).toEqual([]);
    expect(auto.warnings.join(' ')).toMatch(/both carry the tone/);
    const forced = analyzeWavBytes(bytes, { drivenChannel: 0 }).separation[0]!;
    expect(forced.db!).toBeCloseTo(20 * Math.log10(0.5 / 0.4), 2);
  });
});
