import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateNoise, generateSine, mixInto } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { db10, soxDir } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

/** In-band share of white noise: 20 Hz–20 kHz of 0–fs/2 (AES17 band), in dB. */
const bandDb = (fs: number): number => db10((Math.min(20000, fs / 2) - 20) / (fs / 2));

describe('THD (harmonics 2…10 over the fundamental)', () => {
  it('analytic: 1 % 2nd + 0.5 % 3rd harmonic = 1.118 % (−39.03 dB) — our generator', () => {
    const x = generateSine({
      sampleRate: 48000, frequencyHz: 997, levelDbfs: -6, seconds: 2,
      harmonics: [{ order: 2, ratio: 0.01 }, { order: 3, ratio: 0.005 }],
    });
    const c = analyzeWavBytes(encodeWav(x, 48000, 24)).channels[0]!;
    // √(0.01² + 0.005²) = 1.11803 %. 24-bit quantisation adds ~−150 dB in each 17-bin lobe:
    // 10⁻⁴ relative is a generous bound.
    expect(Math.abs(c.thdPct! / 1.118034 - 1)).toBeLessThan(1e-4);
    expect(c.thdDb!).toBeCloseTo(-39.03, 2);
    expect(c.harmonics.find((h) => h.order === 2)!.relativeDb!).toBeCloseTo(-40, 2);
    expect(c.harmonics.find((h) => h.order === 3)!.relativeDb!).toBeCloseTo(-46.02, 2);
    expect(c.harmonics.map((h) => h.order)).toEqual([2, 3, 4, 5, 6, 7, 8, 9, 10]);
  });

  it('analytic, signal mixed by sox: 997 + 1994 + 2991 Hz at 0.5 / 0.005 / 0.0025 → 1.118 %', () => {
    const part = (name: string, hz: number, vol: number): string => {
      dir.sox('-n', '-r', '96000', '-b', '32', '-e', 'floating-point', dir.path(name), 'synth', '2', 'sine', String(hz), 'vol', String(vol));
      return dir.path(name);
    };
    const files = [part('h1.wav', 997, 0.5), part('h2.wav', 1994, 0.005), part('h3.wav', 2991, 0.0025)];
    // -v 1 on each input: sox -m would otherwise scale each by 1/3.
    dir.sox('-m', ...files.flatMap((f) => ['-v', '1', f]), '-b', '24', dir.path('mix.wav'));
    const c = analyzeWavBytes(dir.read('mix.wav')).channels[0]!;
    expect(Math.abs(c.thdPct! / 1.118034 - 1)).toBeLessThan(1e-3);
    // Fundamental frequency from the lobe centroid: 0.01 Hz is a tenth of a per-mille of a bin.
    expect(Math.abs(c.fundamentalHz! - 997)).toBeLessThan(0.01);
    expect(c.fundamentalDbfs!).toBeCloseTo(20 * Math.log10(0.5), 2);
  });

  it('harmonics above Nyquist are left out: 2.5 kHz at 16 kHz sampling keeps only H2 (5 kHz) and H3 (7.5 kHz)', () => {
    const x = generateSine({ sampleRate: 16000, frequencyHz: 2500, levelDbfs: -6, seconds: 2, harmonics: [{ order: 2, ratio: 0.01 }] });
    const c = analyzeWavBytes(encodeWav(x, 16000, 24)).channels[0]!;
    expect(c.harmonics.map((h) => h.order)).toEqual([2, 3]);
    expect(c.thdPct!).toBeCloseTo(1, 3);
  });
});

describe('THD+N, SINAD and noise against quantisation theory', () => {
  // Bennett (Bell System Technical Journal 1948): ideal N-bit quantisation noise of a full-scale
  // sine is 6.0206·N + 1.761 dB down; white, so 20 Hz–20 kHz of 24 kHz holds 0.80 dB less of it.
  const bennett = (bits: number, fs: number): number => -(6.0206 * bits + 1.761) + bandDb(fs);

  it('16-bit, undithered (sox -D): noise floor and SINAD of a 997 Hz tone', () => {
    dir.sox('-D', '-n', '-r', '48000', '-b', '16', dir.path('q16.wav'), 'synth', '3', 'sine', '997', 'vol', '0.9');
    const c = analyzeWavBytes(dir.read('q16.wav')).channels[0]!;
    // Quantisation error of a busy sine is uniform within ~0.1 dB of theory; the noise estimate
    // over 3 frames × 27 000 bins varies by under 0.02 dB: 0.15 dB in all.
    expect(Math.abs(c.noiseDbfs! - bennett(16, 48000))).toBeLessThan(0.15);
    expect(Math.abs(c.sinadDb! - (20 * Math.log10(0.9) - bennett(16, 48000)))).toBeLessThan(0.15);
    expect(c.thdnDb!).toBeCloseTo(-c.sinadDb!, 9);
  });

  it('24-bit (sox): noise floor at −147.06 dBFS in band', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('q24.wav'), 'synth', '3', 'sine', '997', 'vol', '0.5');
    const c = analyzeWavBytes(dir.read('q24.wav')).channels[0]!;
    // The 7-term window leaks about −160 dBc spread over the band: +0.04 dB at a −6 dBFS tone.
    expect(Math.abs(c.noiseDbfs! - bennett(24, 48000))).toBeLessThan(0.15);
  });

  it('AES17 dynamic range: 997 Hz at −60 dBFS in 16 bits, DR = 60 dB − THD+N ≈ Bennett', () => {
    dir.sox('-D', '-n', '-r', '48000', '-b', '16', dir.path('dr.wav'), 'synth', '3', 'sine', '997', 'vol', '0.001');
    const c = analyzeWavBytes(dir.read('dr.wav')).channels[0]!;
    const dr = 60 + -c.thdnDb!;
    // At −60 dBFS the error is no longer quite uniform (33 codes of swing): allow 0.5 dB.
    expect(Math.abs(dr - -bennett(16, 48000))).toBeLessThan(0.5);
  });

  it('THD+N with a known amount of white Gaussian noise (computed)', () => {
    const fs = 48000;
    const [x] = generateSine({ sampleRate: fs, frequencyHz: 997, levelDbfs: -10, seconds: 3 });
    mixInto(x!, generateNoise({ sampleRate: fs, levelDbfs: -70, seconds: 3, seed: 17 })[0]!);
    const c = analyzeWavBytes(encodeWav([x!], fs, 'float32')).channels[0]!;
    // Tone −10 dBFS, noise −70 dBFS full band → −70.80 in band: THD+N ≈ −60.80 dB (noise ≪ tone).
    const expected = -70 + bandDb(fs) - -10;
    // Random noise: the estimate over ~80 000 bin values varies by ~0.02 dB; 0.1 dB allowed.
    expect(Math.abs(c.thdnDb! - expected)).toBeLessThan(0.1);
    expect(Math.abs(c.noiseDbfs! - (-70 + bandDb(fs)))).toBeLessThan(0.1);
    expect(c.thdnPct!).toBeCloseTo(100 * 10 ** (c.thdnDb! / 20), 9);
  });
});
