import type { WavInfo } from '../shared/analysis-result';
import type { SampleHistory } from './sample-history';
import { WavFormatError } from './wav-header';

// Sample decoding into planar Float64 blocks. Scale: integer PCM divided by 2^(bits−1), so the
// most negative code is −1.0 and full scale is 1.0 (the convention sox uses too); floats as stored.
// DataView reads compile to single unaligned loads; the scale factors are exact powers of two, so
// multiplying by their inverse loses nothing.
// Blocks are cut at fixed absolute frame positions, so every consumer sees the same blocks however
// the input bytes were chunked — the whole-file and streaming paths give identical figures.

export type BlockSink = (channels: readonly Float64Array[], startFrame: number, length: number) => void;

/** ITU-T G.711 A-law expansion to 16-bit linear (the standard segment/mantissa decoding). */
function alawTable(): Float64Array {
  const t = new Float64Array(256);
  for (let i = 0; i < 256; i++) {
    const v = i ^ 0x55;
    const seg = (v >> 4) & 7;
    let mag = ((v & 0x0f) << 4) + 8;
    if (seg > 0) mag = (mag + 0x100) << (seg - 1);
    t[i] = ((v & 0x80) ? mag : -mag) / 32768;
  }
  return t;
}

/** ITU-T G.711 µ-law expansion to 16-bit linear (bias 0x84). */
function mulawTable(): Float64Array {
  const t = new Float64Array(256);
  for (let i = 0; i < 256; i++) {
    const v = ~i & 0xff;
    const mag = ((((v & 0x0f) << 3) + 0x84) << ((v >> 4) & 7)) - 0x84;
    t[i] = ((v & 0x80) ? -mag : mag) / 32768;
  }
  return t;
}

/** Largest and smallest values a format can hold, used to count clipped samples. */
export function fullScaleOf(info: Pick<WavInfo, 'format' | 'bitsPerSample'>): { hi: number; lo: number } {
  if (info.format === 'float') return { hi: 1, lo: -1 };
  if (info.format === 'alaw') return { hi: 32256 / 32768, lo: -32256 / 32768 };
  if (info.format === 'mulaw') return { hi: 32124 / 32768, lo: -32124 / 32768 };
  const half = 2 ** (info.bitsPerSample - 1);
  return { hi: (half - 1) / half, lo: -1 };
}

const LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/**
 * 24-bit mono or stereo from 32-bit words: 12 bytes = 3 words = 4 samples (w0 = s0 + low byte of
 * s1, w1 = the rest of s1 + two bytes of s2, w2 = last byte of s2 + s3). Needs (b.byteOffset + at)
 * divisible by 4 and a little-endian machine. For stereo, `only` picks one channel (0 or 1) into
 * out[0], or −1 for both. Returns the frames decoded: whole groups only, the caller finishes the rest.
 */
function decode24Words(b: Uint8Array, at: number, n: number, out: readonly Float64Array[], pos: number, ch: number, only: number): number {
  // A shift, not a division: the frame count is often odd, and n·ch stays far below 2^31.
  const groups = (n * ch) >> 2;
  const w = new Int32Array(b.buffer, b.byteOffset + at, groups * 3);
  const s = 1 / 8388608;
  const a = out[0]!;
  if (ch === 1) {
    for (let g = 0, j = 0, f = pos; g < groups; g++, j += 3, f += 4) {
      const w0 = w[j]!;
      const w1 = w[j + 1]!;
      const w2 = w[j + 2]!;
      a[f] = ((w0 << 8) >> 8) * s;
      a[f + 1] = (((w1 << 16) >> 8) | (w0 >>> 24)) * s;
      a[f + 2] = (((w2 << 24) >> 8) | (w1 >>> 16)) * s;
      a[f + 3] = (w2 >> 8) * s;
    }
    return groups * 4;
  }
  // One channel of a stereo pair: a thread measuring its share skips the other's arithmetic.
  if (only === 0) {
    for (let g = 0, j = 0, f = pos; g < groups; g++, j += 3, f += 2) {
      a[f] = ((w[j]! << 8) >> 8) * s;
      a[f + 1] = (((w[j + 2]! << 24) >> 8) | (w[j + 1]! >>> 16)) * s;
    }
    return groups * 2;
  }
  if (only === 1) {
    for (let g = 0, j = 0, f = pos; g < groups; g++, j += 3, f += 2) {
      a[f] = (((w[j + 1]! << 16) >> 8) | (w[j]! >>> 24)) * s;
      a[f + 1] = (w[j + 2]! >> 8) * s;
    }
    return groups * 2;
  }
  const r = out[1]!;
  for (let g = 0, j = 0, f = pos; g < groups; g++, j += 3, f += 2) {
    const w0 = w[j]!;
    const w1 = w[j + 1]!;
    const w2 = w[j + 2]!;
    a[f] = ((w0 << 8) >> 8) * s;
    r[f] = (((w1 << 16) >> 8) | (w0 >>> 24)) * s;
    a[f + 1] = (((w2 << 24) >> 8) | (w1 >>> 16)) * s;
    r[f + 1] = (w2 >> 8) * s;
  }
  return groups * 2;
}

/** Decodes `frames` frames; returns −1, or the index (frame·channels + channel) of a non-finite sample. */
type FrameReader = (b: Uint8Array, at: number, frames: number, out: readonly Float64Array[], pos: number) => number;

/**
 * `keep` lists the channels decoded, in order: out[k] receives channel keep[k]. Float data is
 * checked for non-finite values in every channel all the same, so a damaged file fails with the
 * same message whichever channels a reader keeps.
 */
function makeReader(info: WavInfo, view: () => DataView, keep: readonly number[]): FrameReader {
  const ch = info.channels;
  const kept = keep.length;
  const stride = info.blockAlign;
  // Channel-outer loops: each inner loop writes one output array with a fixed byte stride.
  switch (info.format === 'pcm' ? info.bitsPerSample : info.format === 'float' ? -info.bitsPerSample : info.format) {
    case 8:
      return (b, at, n, out, pos) => {
        for (let k = 0; k < kept; k++) {
          const o = out[k]!;
          for (let f = 0, i = at + keep[k]!; f < n; f++, i += stride) o[pos + f] = (b[i]! - 128) * (1 / 128);
        }
        return -1;
      };
    case 16:
      return (_b, at, n, out, pos) => {
        const dv = view();
        for (let k = 0; k < kept; k++) {
          const o = out[k]!;
          for (let f = 0, i = at + 2 * keep[k]!; f < n; f++, i += stride) o[pos + f] = dv.getInt16(i, true) * (1 / 32768);
        }
        return -1;
      };
    case 24: {
      // The hot path for long captures. Mono and stereo go word-wise from the first frame that
      // sits on a 4-byte boundary (see decode24Words). Otherwise, and for the frames around that
      // stretch, a little-endian 32-bit read starting one byte early puts the sample in the top 24
      // bits, so `>> 8` yields it sign-extended in one unaligned load.
      const byteWise = (b: Uint8Array, at: number, from: number, to: number, out: readonly Float64Array[], pos: number): void => {
        const dv = view();
        for (let k = 0; k < kept; k++) {
          const o = out[k]!;
          let f = from;
          let i = at + from * stride + 3 * keep[k]!;
          if (i === 0 && f < to) {
            o[pos + f] = (((b[0]! | (b[1]! << 8) | (b[2]! << 16)) << 8) >> 8) * (1 / 8388608);
            f++;
            i += stride;
          }
          for (; f < to; f++, i += stride) o[pos + f] = (dv.getInt32(i - 1, true) >> 8) * (1 / 8388608);
        }
      };
      const wordWise = ch <= 2 && LITTLE_ENDIAN;
      const only = ch === 2 && kept === 1 ? keep[0]! : -1;
      return (b, at, n, out, pos) => {
        // Frames to skip until a 4-byte boundary: stereo frames are 6 bytes (only an even start
        // can get there), mono 3 (always within four frames).
        let lead = -1;
        if (wordWise) for (let k = 0; k < 4 && k < n; k++) if ((b.byteOffset + at + k * stride) % 4 === 0) { lead = k; break; }
        if (lead < 0) {
          byteWise(b, at, 0, n, out, pos);
          return -1;
        }
        byteWise(b, at, 0, lead, out, pos);
        const done = lead + decode24Words(b, at + lead * stride, n - lead, out, pos + lead, ch, only);
        byteWise(b, at, done, n, out, pos);
        return -1;
      };
    }
    case 32:
      return (_b, at, n, out, pos) => {
        const dv = view();
        for (let k = 0; k < kept; k++) {
          const o = out[k]!;
          for (let f = 0, i = at + 4 * keep[k]!; f < n; f++, i += stride) o[pos + f] = dv.getInt32(i, true) * (1 / 2147483648);
        }
        return -1;
      };
    case -32:
    case -64: {
      const size = info.bitsPerSample / 8;
      // slot[c]: where channel c goes in out, or −1 when it is only checked.
      const slot = Array.from({ length: ch }, (_, c) => keep.indexOf(c));
      return (_b, at, n, out, pos) => {
        const dv = view();
        for (let f = 0, i = at; f < n; f++) {
          for (let c = 0; c < ch; c++, i += size) {
            const v = size === 8 ? dv.getFloat64(i, true) : dv.getFloat32(i, true);
            // v − v is NaN exactly when v is NaN or ±Infinity: one test for both.
            if (v - v !== 0) return f * ch + c;
            const k = slot[c]!;
            if (k >= 0) out[k]![pos + f] = v;
          }
        }
        return -1;
      };
    }
    case 'alaw':
    case 'mulaw': {
      const t = info.format === 'alaw' ? alawTable() : mulawTable();
      return (b, at, n, out, pos) => {
        for (let k = 0; k < kept; k++) {
          const o = out[k]!;
          for (let f = 0, i = at + keep[k]!; f < n; f++, i += stride) o[pos + f] = t[b[i]!]!;
        }
        return -1;
      };
    }
    default:
      throw new WavFormatError('unsupported-bit-depth', `no decoder for ${info.bitsPerSample}-bit ${info.format}`);
  }
}

/** Frames per decoded block: big enough to amortise the per-block work, small enough to stay in cache. */
export const DECODER_BLOCK_FRAMES = 8192;

/** Turns the data chunk's bytes, in chunks of any size, into fixed-size planar blocks. */
export class FrameDecoder {
  readonly blockFrames: number;
  private readonly info: WavInfo;
  private readonly sink: BlockSink;
  private readonly block: Float64Array[];
  private readonly histories: readonly SampleHistory[] | null;
  private readonly carry: Uint8Array;
  private carryLength = 0;
  private blockFill = 0;
  private blockStart = 0;
  private framesDone = 0;
  private currentView: DataView = new DataView(new ArrayBuffer(0));
  private readonly read: FrameReader;

  /**
   * `keep`: the channels to decode, in order (default all); the sink's blocks hold those only.
   * `histories`: one per kept channel; each block is decoded straight into its ring (the sink's
   * blocks are windows of it), so the samples stay there for whoever looks back.
   */
  constructor(info: WavInfo, sink: BlockSink, blockFrames = DECODER_BLOCK_FRAMES, keep?: readonly number[], histories?: readonly SampleHistory[]) {
    this.info = info;
    this.sink = sink;
    this.blockFrames = blockFrames;
    const channels = keep ?? Array.from({ length: info.channels }, (_, c) => c);
    if (histories && histories.length !== channels.length) throw new RangeError(`${histories.length} histories for ${channels.length} channels`);
    this.histories = histories ?? null;
    // Built by push, never by map: one array shape for every decoder (see flush()).
    this.block = [];
    for (let k = 0; k < channels.length; k++) this.block.push(histories ? histories[k]!.blockAt(0, blockFrames) : new Float64Array(blockFrames));
    this.carry = new Uint8Array(info.blockAlign);
    this.read = makeReader(info, () => this.currentView, channels);
  }

  get framesDecoded(): number {
    return this.framesDone;
  }

  /** Feeds bytes of the data chunk; bytes past its declared end are ignored (trailing chunks). */
  push(bytes: Uint8Array): void {
    const align = this.info.blockAlign;
    const remainingBytes = (this.info.frames - this.framesDone) * align - this.carryLength;
    let b = bytes.length > remainingBytes ? bytes.subarray(0, Math.max(0, remainingBytes)) : bytes;
    if (b.length === 0) return;
    if (this.carryLength > 0) {
      const take = Math.min(align - this.carryLength, b.length);
      this.carry.set(b.subarray(0, take), this.carryLength);
      this.carryLength += take;
      b = b.subarray(take);
      if (this.carryLength < align) return;
      this.decode(this.carry, 1);
      this.carryLength = 0;
    }
    const whole = Math.floor(b.length / align);
    if (whole > 0) this.decode(b, whole);
    const rest = b.length - whole * align;
    if (rest > 0) {
      this.carry.set(b.subarray(whole * align));
      this.carryLength = rest;
    }
  }

  private decode(bytes: Uint8Array, frames: number): void {
    this.currentView = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    let at = 0;
    let left = frames;
    while (left > 0) {
      const n = Math.min(left, this.blockFrames - this.blockFill);
      const bad = this.read(bytes, at, n, this.block, this.blockFill);
      if (bad >= 0) {
        const ch = this.info.channels;
        const frame = this.framesDone + Math.floor(bad / ch);
        throw new WavFormatError(
          'non-finite-sample',
          `sample at frame ${frame} (${(frame / this.info.sampleRate).toFixed(6)} s), channel ${bad % ch}, is NaN or infinite`,
        );
      }
      at += n * this.info.blockAlign;
      left -= n;
      this.blockFill += n;
      this.framesDone += n;
      if (this.blockFill === this.blockFrames) this.flush();
    }
  }

  private flush(): void {
    if (this.blockFill === 0) return;
    this.sink(this.block, this.blockStart, this.blockFill);
    this.blockStart += this.blockFill;
    this.blockFill = 0;
    // In place: with Array.prototype.map here, V8 was seen handing back a holey array part-way
    // through a long capture, and that one change of array shape threw the optimised decoder back
    // to slower code (--trace-deopt: "wrong map").
    const h = this.histories;
    if (h) for (let k = 0; k < h.length; k++) this.block[k] = h[k]!.blockAt(this.blockStart, this.blockFrames);
  }

  /** Ends the data; throws 'truncated' when fewer frames arrived than the header declared. */
  finish(): void {
    if (this.framesDone < this.info.frames) {
      const got = this.framesDone * this.info.blockAlign + this.carryLength;
      throw new WavFormatError(
        'truncated',
        `data chunk declares ${this.info.dataBytes} bytes (${this.info.frames} frames) but the file ends after ${got}`,
      );
    }
    this.flush();
  }
}
