import FFT from 'fft.js';

// Typed wrapper over fft.js (radix-4, double precision) so its untyped API stays in this file.

export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 4 && (n & (n - 1)) === 0;
}

/** Largest power of two ≤ n (n ≥ 1). */
export function floorPowerOfTwo(n: number): number {
  return 2 ** Math.floor(Math.log2(n));
}

/** Smallest power of two ≥ n (n ≥ 1). */
export function ceilPowerOfTwo(n: number): number {
  return 2 ** Math.ceil(Math.log2(n));
}

const tables = new Map<number, FFT>();

/** fft.js instances hold only their twiddle tables, so one per size is shared (a few sizes kept). */
function fftOfSize(size: number): FFT {
  let f = tables.get(size);
  if (!f) {
    f = new FFT(size);
    if (tables.size >= 4) tables.delete(tables.keys().next().value!);
    tables.set(size, f);
  }
  return f;
}

export class RealFft {
  readonly size: number;
  private readonly fft: FFT;
  private readonly out: Float64Array;

  constructor(size: number) {
    if (!isPowerOfTwo(size)) throw new RangeError(`FFT size must be a power of two ≥ 4, got ${size}`);
    this.size = size;
    this.fft = fftOfSize(size);
    this.out = new Float64Array(2 * size);
  }

  /** Adds |X[k]|² for k = 0 … N/2 of the real input to `acc` (length N/2 + 1). */
  accumulatePower(input: Float64Array, acc: Float64Array): void {
    if (input.length !== this.size || acc.length !== this.size / 2 + 1) {
      throw new RangeError(`accumulatePower: input ${input.length}, acc ${acc.length} for FFT size ${this.size}`);
    }
    const out = this.out;
    this.fft.realTransform(out, input);
    for (let k = 0, half = this.size / 2; k <= half; k++) {
      const re = out[2 * k]!;
      const im = out[2 * k + 1]!;
      acc[k]! += re * re + im * im;
    }
  }
}
