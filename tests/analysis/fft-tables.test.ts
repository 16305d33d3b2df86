import FFT from 'fft.js';
import { describe, expect, it } from 'vitest';
import { fftWithTypedTables } from '../../analysis/fft';
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
