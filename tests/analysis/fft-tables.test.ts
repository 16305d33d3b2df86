import FFT from 'fft.js';
import { describe, expect, it } from 'vitest';
import { fftWithTypedTables, RealFft } from '../../analysis/fft';
import { seededGaussian } from '../../analysis/generate';

// analysis/fft.ts builds fft.js instances with its tables in typed arrays. The transforms must be
// fft.js's own, bit for bit: the reference is an instance from fft.js's constructor.

describe('fft.js with typed tables', () => {
  it('transforms exactly as fft.js’s own instance, real and complex, at odd and even powers of two', () => {
    const gauss = seededGaussian(11);
    for (const size of [4, 8, 16, 64, 512, 2048, 8192]) {
      const ours = fftWithTypedTables(size);
      const theirs = new FFT(size);
      const input = Float64Array.from({ length: size }, () => gauss());
      const a = new Float64Array(2 * size);
      const b = new Float64Array(2 * size);
      ours.realTransform(a, input);
      theirs.realTransform(b, input);
      expect(Array.from(a), `real, size ${size}`).toEqual(Array.from(b));
      const complex = Float64Array.from({ length: 2 * size }, () => gauss());
      ours.transform(a, complex);
      theirs.transform(b, complex);
      expect(Array.from(a), `complex, size ${size}`).toEqual(Array.from(b));
    }
  });

  it('refuses a size that is not a power of two', () => {
    expect(() => fftWithTypedTables(96)).toThrow(/power of two/);
  });
});

// RealFft: real frames' power spectra by a half-size complex transform, with scratch arrays shared
// by every transform of a size in a thread.
describe('RealFft', () => {
  it('gives the DFT’s |X[k]|²: fft.js’s real transform to rounding, and a cosine on a bin exactly', () => {
    const gauss = seededGaussian(13);
    for (const size of [8, 16, 64, 1024, 4096, 1 << 17]) {
      const x = Float64Array.from({ length: size }, () => gauss());
      const reference = new FFT(size);
      const out = reference.createComplexArray() as number[];
      reference.realTransform(out, x);
      const acc = new Float64Array(size / 2 + 1);
      new RealFft(size).accumulatePower(x, acc);
      let peak = 0;
      for (let k = 0; k <= size / 2; k++) peak = Math.max(peak, out[2 * k]! * out[2 * k]! + out[2 * k + 1]! * out[2 * k + 1]!);
      for (let k = 0; k <= size / 2; k++) {
        const p = out[2 * k]! * out[2 * k]! + out[2 * k + 1]! * out[2 * k + 1]!;
        expect(Math.abs(acc[k]! - p) / peak, `size ${size}, bin ${k}`).toBeLessThan(1e-13);
      }
    }
    // Analytic: A·cos(2πk₀n/N) has X[k₀] = A·N/2 and nothing elsewhere; a constant A has X[0] = A·N.
    const size = 256;
    const cosine = Float64Array.from({ length: size }, (_, n) => 0.5 * Math.cos((2 * Math.PI * 10 * n) / size));
    const acc = new Float64Array(size / 2 + 1);
    new RealFft(size).accumulatePower(cosine, acc);
    expect(Math.sqrt(acc[10]!)).toBeCloseTo(0.5 * (size / 2), 9);
    expect(Math.max(...acc.filter((_, k) => k !== 10))).toBeLessThan(1e-20);
    const dc = new Float64Array(size / 2 + 1);
    new RealFft(size).accumulatePower(new Float64Array(size).fill(0.25), dc);
    expect(Math.sqrt(dc[0]!)).toBeCloseTo(0.25 * size, 9);
    expect(() => new RealFft(4)).toThrow(RangeError);
  });

  it('gives the same spectra whether accumulators of one size take turns or not (shared scratch)', () => {
    const size = 1024;
    const gauss = seededGaussian(12);
    const frames = Array.from({ length: 4 }, () => Float64Array.from({ length: size }, () => gauss()));
    const window = Float64Array.from({ length: size }, (_, n) => Math.sin((Math.PI * n) / size));
    const alone = (xs: Float64Array[]) => {
      const acc = new Float64Array(size / 2 + 1);
      const f = new RealFft(size);
      for (const x of xs) f.accumulatePower(Float64Array.from(x, (v, n) => v * window[n]!), acc);
      return Array.from(acc);
    };
    const refA = alone(frames.slice(0, 2));
    const refB = alone(frames.slice(2));
    const a = new RealFft(size);
    const b = new RealFft(size);
    const accA = new Float64Array(size / 2 + 1);
    const accB = new Float64Array(size / 2 + 1);
    for (let i = 0; i < 2; i++) {
      a.accumulateWindowedPower(frames[i]!, window, accA);
      b.accumulateWindowedPower(frames[i + 2]!, window, accB);
    }
    expect(Array.from(accA)).toEqual(refA);
    expect(Array.from(accB)).toEqual(refB);
    expect(() => a.accumulateWindowedPower(frames[0]!.subarray(1), window, accA)).toThrow(RangeError);
  });
});
