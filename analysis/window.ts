import { RealFft } from './fft';

// DFT windows, periodic ("DFT-even") form: w[n] = Σ (−1)^k a_k cos(2πkn/N), n = 0 … N−1, which is
// the form F. J. Harris (Proc. IEEE 66(1), 1978) tabulates.

export type WindowKind = 'rectangular' | 'hann' | 'hamming' | 'blackman-harris-4' | 'blackman-harris-7' | 'sine';

const COEFFICIENTS: Record<Exclude<WindowKind, 'sine'>, readonly number[]> = {
  rectangular: [1],
  hann: [0.5, 0.5],
  hamming: [0.54, 0.46],
  // Harris 1978, minimum 4-term Blackman-Harris (−92 dB side lobes).
  'blackman-harris-4': [0.35875, 0.48829, 0.14128, 0.01168],
  // 7-term Blackman-Harris (side lobes about −180 dB): the coefficients are from memory of the
  // published set; its leakage floor (≈ −160 dBc) is checked by the 24-bit quantisation test.
  'blackman-harris-7': [
    0.27105140069342, 0.43329793923448, 0.21812299954311, 0.06592544638803, 0.01081174209837,
    0.00077658482522, 0.00001388721735,
  ],
};

/** A K-term cosine-sum window's main lobe first falls to zero K bins from its centre. */
export function mainLobeHalfWidthBins(kind: Exclude<WindowKind, 'sine'>): number {
  return COEFFICIENTS[kind].length;
}

const cache = new Map<string, Float64Array>();

/** A window of the given kind and length. Shared and cached (a few sizes): callers must not write to it. */
export function makeWindow(kind: WindowKind, length: number): Float64Array {
  if (!Number.isInteger(length) || length < 2) throw new RangeError(`window length must be an integer ≥ 2, got ${length}`);
  const key = `${kind}:${length}`;
  const hit = cache.get(key);
  if (hit) return hit;
  const w = new Float64Array(length);
  if (kind === 'sine') {
    // sin(πn/N): its square is the Hann window, so frames at a hop of N/2 weigh every sample equally.
    for (let n = 0; n < length; n++) w[n] = Math.sin((Math.PI * n) / length);
    return remember(key, w);
  }
  const a = COEFFICIENTS[kind];
  // Periodic windows are symmetric about N/2 (w[N − n] = w[n]), so half the points suffice, and
  // cos(kθ) follows from cos θ by the Chebyshev recurrence cos kθ = 2·cos θ·cos (k−1)θ − cos (k−2)θ:
  // one Math.cos per point (rounding stays near 1e-15, far below the −160 dB this window reaches).
  for (let n = 0; n <= length / 2; n++) {
    const c1 = Math.cos((2 * Math.PI * n) / length);
    let prev = 1;
    let cur = c1;
    let v = a[0]!;
    for (let k = 1; k < a.length; k++) {
      v += (k % 2 === 0 ? 1 : -1) * a[k]! * cur;
      const next = 2 * c1 * cur - prev;
      prev = cur;
      cur = next;
    }
    w[n] = v;
    if (n > 0) w[length - n] = v;
  }
  return remember(key, w);
}

function remember(key: string, w: Float64Array): Float64Array {
  if (cache.size >= 4) cache.delete(cache.keys().next().value!);
  cache.set(key, w);
  return w;
}

export interface WindowProperties {
  /** Σw / N: the amplitude a bin-centred sine reads, relative to a rectangular window. */
  coherentGain: number;
  /** Equivalent noise bandwidth in bins: N·Σw² / (Σw)². */
  enbwBins: number;
  sum: number;
  sumSquares: number;
}

export function windowProperties(w: Float64Array): WindowProperties {
  const n = w.length;
  let sum = 0;
  let sumSquares = 0;
  for (let i = 0; i < n; i++) {
    sum += w[i]!;
    sumSquares += w[i]! * w[i]!;
  }
  return { coherentGain: sum / n, enbwBins: (n * sumSquares) / (sum * sum), sum, sumSquares };
}

/** Loss for a sine half-way between bins, dB (positive): |Σ w[n]·e^(−jπn/N)| against Σw. */
export function scallopLossDb(w: Float64Array): number {
  const n = w.length;
  let sum = 0;
  let re = 0;
  let im = 0;
  for (let i = 0; i < n; i++) {
    sum += w[i]!;
    re += w[i]! * Math.cos((Math.PI * i) / n);
    im -= w[i]! * Math.sin((Math.PI * i) / n);
  }
  return -20 * Math.log10(Math.hypot(re, im) / sum);
}

/** Highest side lobe in dB relative to the main-lobe peak, from a zero-padded transform. */
export function highestSideLobeDb(w: Float64Array, zeroPad = 16): number {
  const size = w.length * zeroPad;
  const fft = new RealFft(size);
  const padded = new Float64Array(size);
  padded.set(w);
  const power = new Float64Array(size / 2 + 1);
  fft.accumulatePower(padded, power);
  // Walk down the main lobe to its first minimum, then take the largest value beyond it.
  let k = 1;
  while (k < power.length - 1 && power[k + 1]! < power[k]!) k++;
  let highest = 0;
  for (; k < power.length; k++) if (power[k]! > highest) highest = power[k]!;
  return 10 * Math.log10(highest / power[0]!);
}
