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

/** The fields fft.js 4.0.x keeps, as its constructor sets them up (tests/analysis/fft-tables.test.ts holds us to it). */
interface FftFields {
  size: number;
  _csize: number;
  table: Float64Array;
  _width: number;
  _bitrev: Int32Array;
  _out: null;
  _data: null;
  _inv: number;
}

/**
 * An fft.js instance whose tables are the ones its constructor computes, same expressions, same
 * values, but held in typed arrays. Its constructor fills plain arrays: for the 2^17-point
 * measurement frames that is 2 MB of boxed-array garbage and tens of milliseconds of cold code in
 * every analysis thread, about as long as the frame's transform itself.
 */
export function fftWithTypedTables(size: number): FFT {
  if (!isPowerOfTwo(size)) throw new RangeError(`FFT size must be a power of two ≥ 4, got ${size}`);
  const f = Object.create(FFT.prototype as object) as FftFields;
  f.size = size;
  f._csize = size << 1;
  const table = new Float64Array(size * 2);
  for (let i = 0; i < table.length; i += 2) {
    const angle = (Math.PI * i) / size;
    table[i] = Math.cos(angle);
    table[i + 1] = -Math.sin(angle);
  }
  f.table = table;
  const power = Math.log2(size);
  f._width = power % 2 === 0 ? power - 1 : power;
  const bitrev = new Int32Array(1 << f._width);
  for (let j = 0; j < bitrev.length; j++) {
    let r = 0;
    for (let shift = 0; shift < f._width; shift += 2) r |= ((j >>> shift) & 3) << (f._width - shift - 2);
    bitrev[j] = r;
  }
  f._bitrev = bitrev;
  f._out = null;
  f._data = null;
  f._inv = 0;
  return f as unknown as FFT;
}

/**
 * Per size N: fft.js's tables for the N/2-point complex transform that RealFft runs, the twiddles
 * that turn its output into the N-point real input's spectrum, and the scratch arrays every
 * transform of that size writes and reads within one synchronous call. No transform keeps its
 * scratch past the call that filled it, so one kit per size serves every analysis in the thread
 * (a few sizes kept). Fresh scratch per analysis was 3 MB of garbage per 2^17-point measurement
 * spectrum, which piled up in a kept analysis thread between collections.
 */
interface SizeKit {
  half: FFT;
  /** cos and sin of 2πk/N, k = 0 … N/2, interleaved. */
  twiddles: Float64Array;
  /** The half-size transform's complex output. */
  out: Float64Array;
  /** A windowed copy of the input. */
  windowed: Float64Array;
}

const kits = new Map<number, SizeKit>();

function kitOfSize(size: number): SizeKit {
  let k = kits.get(size);
  if (!k) {
    const half = size / 2;
    const twiddles = new Float64Array(2 * (half + 1));
    for (let j = 0; j <= half; j++) {
      const angle = (2 * Math.PI * j) / size;
      twiddles[2 * j] = Math.cos(angle);
      twiddles[2 * j + 1] = Math.sin(angle);
    }
    k = { half: fftWithTypedTables(half), twiddles, out: new Float64Array(size), windowed: new Float64Array(size) };
    if (kits.size >= 4) kits.delete(kits.keys().next().value!);
    kits.set(size, k);
  }
  return k;
}

/**
 * Power spectra of real frames. The N real samples are read as N/2 complex ones (even samples
 * real, odd imaginary) and transformed at half the size; the two interleaved half-length spectra
 * are then parted and joined by one butterfly per bin (the standard real-input algorithm; cited
 * from memory: Press et al., Numerical Recipes, §12.3). On this machine that took 1.8 ms for 2^17 points where
 * fft.js's own real transform took 2.9 ms.
 */
export class RealFft {
  readonly size: number;
  private readonly kit: SizeKit;

  constructor(size: number) {
    // fft.js's transforms start at 4 points, so the real ones here at 8.
    if (!isPowerOfTwo(size) || size < 8) throw new RangeError(`FFT size must be a power of two ≥ 8, got ${size}`);
    this.size = size;
    this.kit = kitOfSize(size);
  }

  /** Adds |X[k]|² for k = 0 … N/2 of the real input to `acc` (length N/2 + 1). */
  accumulatePower(input: Float64Array, acc: Float64Array): void {
    if (input.length !== this.size || acc.length !== this.size / 2 + 1) {
      throw new RangeError(`accumulatePower: input ${input.length}, acc ${acc.length} for FFT size ${this.size}`);
    }
    const { half: fft, twiddles: t, out: z } = this.kit;
    const m = this.size / 2;
    // fft.js takes interleaved re, im: the real frame is already that, read as m complex samples.
    fft.transform(z, input);
    for (let k = 0; k <= m; k++) {
      // Z[k] and Z[m − k] (both Z[0] at the ends).
      const a = k === m ? 0 : 2 * k;
      const b = k === 0 ? 0 : 2 * (m - k);
      const ar = z[a]!;
      const ai = z[a + 1]!;
      const br = z[b]!;
      const bi = z[b + 1]!;
      // Even samples' spectrum E = (Z[k] + conj Z[m−k]) / 2, odd samples' O = (Z[k] − conj Z[m−k]) / 2i.
      const er = 0.5 * (ar + br);
      const ei = 0.5 * (ai - bi);
      const or = 0.5 * (ai + bi);
      const oi = -0.5 * (ar - br);
      // X[k] = E + e^(−2πik/N)·O.
      const c = t[2 * k]!;
      const s = t[2 * k + 1]!;
      const xr = er + c * or + s * oi;
      const xi = ei + c * oi - s * or;
      acc[k]! += xr * xr + xi * xi;
    }
  }

  /** accumulatePower of x·w (x and w of the transform's size), without a copy of the caller's. */
  accumulateWindowedPower(x: Float64Array, w: Float64Array, acc: Float64Array): void {
    if (x.length !== this.size || w.length !== this.size) throw new RangeError(`accumulateWindowedPower: input ${x.length}, window ${w.length} for FFT size ${this.size}`);
    const s = this.kit.windowed;
    for (let i = 0; i < s.length; i++) s[i] = x[i]! * w[i]!;
    this.accumulatePower(s, acc);
  }
}
