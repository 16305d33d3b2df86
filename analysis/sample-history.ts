import { ceilPowerOfTwo } from './fft';

// The recent samples of one channel, kept once for every part of the pass that looks back: the
// decoder writes its blocks straight into this ring, and the click check and the spectrogram's
// transient frames copy what they need out of it. Before, each of them kept its own copy of every
// sample, and those copies cost as much as the measuring itself on a long capture.

export class SampleHistory {
  /** Sample of absolute frame f at ring[f & mask]. */
  readonly ring: Float64Array;
  readonly mask: number;

  /** Holds at least `lookBack` frames behind a block of `blockFrames` being written. */
  constructor(lookBack: number, blockFrames: number) {
    // A power of two, and a whole number of blocks, so no block wraps around the end.
    const size = ceilPowerOfTwo(Math.max(lookBack + blockFrames, 2 * blockFrames));
    if (size % blockFrames !== 0) throw new RangeError(`block of ${blockFrames} frames does not divide a ring of ${size}`);
    this.ring = new Float64Array(size);
    this.mask = size - 1;
  }

  /** The ring's window for the block starting at absolute frame `start`. */
  blockAt(start: number, blockFrames: number): Float64Array {
    const at = start & this.mask;
    return this.ring.subarray(at, at + blockFrames);
  }

  /** Writes x[0, length) as frames [start, start + length); length at most the ring's size. */
  write(start: number, x: Float64Array, length: number): void {
    const { ring, mask } = this;
    const r = start & mask;
    const first = Math.min(length, ring.length - r);
    ring.set(x.subarray(0, first), r);
    if (first < length) ring.set(x.subarray(first, length), 0);
  }

  /**
   * Copies frames [from, to) into out from `at` on. The caller keeps within the look-back it
   * asked for: older frames have been overwritten.
   */
  copy(from: number, to: number, out: Float64Array, at: number): void {
    const { ring, mask } = this;
    for (let q = from; q < to; ) {
      const r = q & mask;
      const take = Math.min(to - q, ring.length - r);
      out.set(ring.subarray(r, r + take), at + q - from);
      q += take;
    }
  }
}
