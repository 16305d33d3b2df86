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

// RealFft shares its scratch arrays between all transforms of a size in a thread: no transform
// keeps them past its own call, so power spectra interleaved between two accumulators must equal
// those taken one accumulator at a time. The reference is fft.js's own instance (Parseval aside,
// |X[k]|² is exactly re² + im² of its output).
describe('RealFft with shared scratch', () => {
  it('gives fft.js’s |X[k]|² whether accumulators of one size take turns or not', () => {
    const size = 1024;
    const gauss = seededGaussian(12);
    const frames = Array.from({ length: 4 }, () => Float64Array.from({ length: size }, () => gauss()));
    const window = Float64Array.from({ length: size }, (_, n) => Math.sin((Math.PI * n) / size));
    const reference = (xs: Float64Array[]) => {
      const fft = new FFT(size);
      const out = new Float64Array(2 * size);
      const acc = new Float64Array(size / 2 + 1);
      for (const x of xs) {
        fft.realTransform(out, Float64Array.from(x, (v, n) => v * window[n]!));
        for (let k = 0; k <= size / 2; k++) acc[k]! += out[2 * k]! * out[2 * k]! + out[2 * k + 1]! * out[2 * k + 1]!;
      }
      return Array.from(acc);
    };
    const a = new RealFft(size);
    const b = new RealFft(size);
    const accA = new Float64Array(size / 2 + 1);
    const accB = new Float64Array(size / 2 + 1);
    for (let i = 0; i < 2; i++) {
      a.accumulateWindowedPower(frames[i]!, window, accA);
      b.accumulateWindowedPower(frames[i + 2]!, window, accB);
    }
    expect(Array.from(accA)).toEqual(reference(frames.slice(0, 2)));
    expect(Array.from(accB)).toEqual(reference(frames.slice(2)));
    expect(() => a.accumulateWindowedPower(frames[0]!.subarray(1), window, accA)).toThrow(RangeError);
  });
});
