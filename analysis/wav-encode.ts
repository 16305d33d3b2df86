import { seededRandom } from './generate';

// WAV writing. Our own writer, because wavefile labels >2-channel float data as integer PCM (its
// extensible header only knows the PCM sub-format) and needs every sample in memory, while the
// bench writes captures of hundreds of MB block by block. Tests read our files back with wavefile.
// WAVE_FORMAT_EXTENSIBLE is used for >2 channels or >16 bits, as the format's guidance asks.

export type SampleFormat = 8 | 16 | 24 | 32 | 'float32' | 'float64';

export interface EncodeOptions {
  /** TPDF dither of ±1 LSB before rounding (integer formats only). Default none. */
  dither?: 'none' | 'tpdf';
  seed?: number;
  /** Force or forbid WAVE_FORMAT_EXTENSIBLE; default by the rule above. */
  extensible?: boolean;
}

export function bytesPerSample(format: SampleFormat): number {
  return format === 'float32' ? 4 : format === 'float64' ? 8 : format / 8;
}

export function encodeWavHeader(o: {
  sampleRate: number;
  channels: number;
  format: SampleFormat;
  frames: number;
  extensible?: boolean;
}): Uint8Array {
  const float = typeof o.format === 'string';
  const bits = bytesPerSample(o.format) * 8;
  const extensible = o.extensible ?? (o.channels > 2 || bits > 16);
  const blockAlign = o.channels * (bits / 8);
  const dataBytes = o.frames * blockAlign;
  const fmtSize = extensible ? 40 : 16;
  const headerBytes = 12 + 8 + fmtSize + 8;
  if (headerBytes - 8 + dataBytes > 0xffffffff) throw new RangeError(`${dataBytes} bytes of samples do not fit a RIFF file`);
  const h = new Uint8Array(headerBytes);
  const dv = new DataView(h.buffer);
  const text = (at: number, s: string): void => {
    for (let i = 0; i < 4; i++) h[at + i] = s.charCodeAt(i);
  };
  const tag = float ? 3 : 1;
  text(0, 'RIFF');
  dv.setUint32(4, headerBytes - 8 + dataBytes + (dataBytes & 1), true);
  text(8, 'WAVE');
  text(12, 'fmt ');
  dv.setUint32(16, fmtSize, true);
  dv.setUint16(20, extensible ? 0xfffe : tag, true);
  dv.setUint16(22, o.channels, true);
  dv.setUint32(24, o.sampleRate, true);
  dv.setUint32(28, o.sampleRate * blockAlign, true);
  dv.setUint16(32, blockAlign, true);
  dv.setUint16(34, bits, true);
  if (extensible) {
    dv.setUint16(36, 22, true);
    dv.setUint16(38, bits, true);
    dv.setUint32(40, o.channels === 1 ? 0x4 : o.channels === 2 ? 0x3 : 2 ** o.channels - 1, true);
    dv.setUint16(44, tag, true);
    h.set([0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71], 46);
  }
  text(headerBytes - 8, 'data');
  dv.setUint32(headerBytes - 4, dataBytes, true);
  return h;
}

/** Interleaves and packs frames [from, from + count) of planar channels. */
export function encodeSamples(
  channels: readonly ArrayLike<number>[],
  format: SampleFormat,
  from: number,
  count: number,
  random: (() => number) | null = null,
): Uint8Array {
  const ch = channels.length;
  const size = bytesPerSample(format);
  const out = new Uint8Array(count * ch * size);
  const dv = new DataView(out.buffer);
  let at = 0;
  if (typeof format === 'string') {
    for (let f = from; f < from + count; f++) {
      for (let c = 0; c < ch; c++, at += size) {
        const v = channels[c]![f]!;
        if (format === 'float32') dv.setFloat32(at, v, true);
        else dv.setFloat64(at, v, true);
      }
    }
    return out;
  }
  const scale = 2 ** (format - 1);
  const max = scale - 1;
  for (let f = from; f < from + count; f++) {
    for (let c = 0; c < ch; c++) {
      let q = channels[c]![f]! * scale;
      if (random) q += random() - random();
      q = Math.round(q);
      q = q > max ? max : q < -scale ? -scale : q;
      if (format === 8) out[at++] = q + 128;
      else {
        for (let b = 0; b < size; b++) out[at++] = (q >> (8 * b)) & 0xff;
      }
    }
  }
  return out;
}

/** A complete WAV file in memory. Integer formats are rounded (optionally TPDF-dithered) and clamped. */
export function encodeWav(
  channels: readonly (Float32Array | Float64Array)[],
  sampleRate: number,
  format: SampleFormat,
  options: EncodeOptions = {},
): Uint8Array {
  if (channels.length < 1 || channels.length > 8) throw new RangeError(`1–8 channels, got ${channels.length}`);
  const frames = channels[0]!.length;
  if (channels.some((c) => c.length !== frames)) throw new RangeError('channels differ in length');
  const header = encodeWavHeader({ sampleRate, channels: channels.length, format, frames, extensible: options.extensible });
  const random = options.dither === 'tpdf' && typeof format === 'number' ? seededRandom(options.seed ?? 1) : null;
  const body = encodeSamples(channels, format, 0, frames, random);
  const out = new Uint8Array(header.length + body.length + (body.length & 1));
  out.set(header);
  out.set(body, header.length);
  return out;
}
