import type { WavInfo } from '../shared/analysis-result';

// RIFF/WAVE header parsing. Our own parser rather than wavefile's because it must work on the
// first bytes of a file (upload validation, streaming) and name each problem precisely.
// Layout: the RIFF/WAVE format (fmt and data chunks, WAVE_FORMAT_EXTENSIBLE) and EBU Tech 3306 (RF64, ds64).

export type WavErrorCode =
  | 'not-riff'
  | 'not-wave'
  | 'unsupported-container'
  | 'truncated'
  | 'header-incomplete'
  | 'header-too-large'
  | 'bad-chunk'
  | 'bad-fmt'
  | 'missing-fmt'
  | 'no-channels'
  | 'too-many-channels'
  | 'unsupported-sample-rate'
  | 'unsupported-encoding'
  | 'unsupported-bit-depth'
  | 'bad-block-align'
  | 'bad-data-size'
  | 'no-samples'
  | 'absurd-size'
  | 'non-finite-sample';

export class WavFormatError extends Error {
  readonly code: WavErrorCode;
  constructor(code: WavErrorCode, message: string) {
    super(message);
    this.name = 'WavFormatError';
    this.code = code;
  }
}

export const MIN_SAMPLE_RATE = 8_000;
export const MAX_SAMPLE_RATE = 384_000;
export const MAX_CHANNELS = 8;
/** Bytes that may precede the samples (metadata chunks); more than this is refused, not guessed. */
export const MAX_HEADER_BYTES = 1 << 20;
/** 1 TiB of samples: far beyond any capture, small enough that frame counts stay exact doubles. */
const MAX_DATA_BYTES = 2 ** 40;

const TAG_PCM = 0x0001;
const TAG_FLOAT = 0x0003;
const TAG_ALAW = 0x0006;
const TAG_MULAW = 0x0007;
const TAG_EXTENSIBLE = 0xfffe;
// KSDATAFORMAT_SUBTYPE_* GUIDs share this tail after the 16-bit format tag.
const GUID_TAIL = [0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71];

const KNOWN_COMPRESSED: Record<number, string> = {
  0x0002: 'ADPCM',
  0x0011: 'IMA ADPCM',
  0x0031: 'GSM 6.10',
  0x0050: 'MPEG audio',
  0x0055: 'MPEG layer 3',
  0x00ff: 'AAC',
  0xf1ac: 'FLAC',
};

function fourcc(b: Uint8Array, at: number): string {
  return String.fromCharCode(b[at]!, b[at + 1]!, b[at + 2]!, b[at + 3]!);
}
function u16(b: Uint8Array, at: number): number {
  return b[at]! | (b[at + 1]! << 8);
}
function u32(b: Uint8Array, at: number): number {
  return (b[at]! | (b[at + 1]! << 8) | (b[at + 2]! << 16) | (b[at + 3]! << 24)) >>> 0;
}
function u64(b: Uint8Array, at: number): number {
  return u32(b, at) + u32(b, at + 4) * 2 ** 32;
}
function hex(tag: number): string {
  return `0x${tag.toString(16).padStart(4, '0')}`;
}

interface FmtFields {
  format: WavInfo['format'];
  formatTag: number;
  extensible: boolean;
  channels: number;
  sampleRate: number;
  bitsPerSample: number;
  validBitsPerSample: number;
  blockAlign: number;
}

function parseFmt(b: Uint8Array, at: number, size: number): FmtFields {
  if (size < 16) throw new WavFormatError('bad-fmt', `fmt chunk is ${size} bytes; at least 16 expected`);
  if (size > 4096) throw new WavFormatError('bad-fmt', `fmt chunk is ${size} bytes; at most 4096 expected`);
  let tag = u16(b, at);
  const channels = u16(b, at + 2);
  const sampleRate = u32(b, at + 4);
  const blockAlign = u16(b, at + 12);
  const bits = u16(b, at + 14);
  let validBits = bits;
  const extensible = tag === TAG_EXTENSIBLE;
  if (extensible) {
    if (size < 40 || u16(b, at + 16) < 22) {
      throw new WavFormatError('bad-fmt', 'WAVE_FORMAT_EXTENSIBLE header is shorter than the 40 bytes it needs');
    }
    validBits = u16(b, at + 18) || bits;
    tag = u16(b, at + 24);
    for (let i = 0; i < GUID_TAIL.length; i++) {
      if (b[at + 26 + i] !== GUID_TAIL[i]) {
        throw new WavFormatError('unsupported-encoding', 'WAVE_FORMAT_EXTENSIBLE sub-format is not a standard audio GUID');
      }
    }
  }
  if (channels === 0) throw new WavFormatError('no-channels', 'fmt chunk declares zero channels');
  if (channels > MAX_CHANNELS) {
    throw new WavFormatError('too-many-channels', `${channels} channels; at most ${MAX_CHANNELS} are supported`);
  }
  if (sampleRate < MIN_SAMPLE_RATE || sampleRate > MAX_SAMPLE_RATE) {
    throw new WavFormatError(
      'unsupported-sample-rate',
      `sample rate ${sampleRate} Hz is outside the supported ${MIN_SAMPLE_RATE}–${MAX_SAMPLE_RATE} Hz`,
    );
  }
  let format: WavInfo['format'];
  let allowed: number[];
  if (tag === TAG_PCM) [format, allowed] = ['pcm', [8, 16, 24, 32]];
  else if (tag === TAG_FLOAT) [format, allowed] = ['float', [32, 64]];
  else if (tag === TAG_ALAW) [format, allowed] = ['alaw', [8]];
  else if (tag === TAG_MULAW) [format, allowed] = ['mulaw', [8]];
  else {
    const name = KNOWN_COMPRESSED[tag];
    throw new WavFormatError(
      'unsupported-encoding',
      `${name ? `${name} (format tag ${hex(tag)})` : `format tag ${hex(tag)}`} is not supported; ` +
        'use PCM (8/16/24/32-bit), IEEE float (32/64-bit), A-law or µ-law',
    );
  }
  if (!allowed.includes(bits)) {
    throw new WavFormatError('unsupported-bit-depth', `${bits}-bit ${format} samples are not supported (${allowed.join('/')} are)`);
  }
  if (validBits < 1 || validBits > bits) {
    throw new WavFormatError('unsupported-bit-depth', `${validBits} valid bits in a ${bits}-bit container`);
  }
  const expectedAlign = channels * (bits / 8);
  if (blockAlign !== expectedAlign) {
    throw new WavFormatError(
      'bad-block-align',
      `block align is ${blockAlign} bytes; ${channels} × ${bits}-bit samples need ${expectedAlign}`,
    );
  }
  return { format, formatTag: tag, extensible, channels, sampleRate, bitsPerSample: bits, validBitsPerSample: validBits, blockAlign };
}

/**
 * Parses a header from the first bytes of a file. Returns null when `bytes` ends before the data
 * chunk starts and more bytes may follow; throws WavFormatError for anything definitely wrong.
 */
export function parseWavHeader(bytes: Uint8Array): WavInfo | null {
  if (bytes.length < 4) return null;
  const container = fourcc(bytes, 0);
  if (container === 'RIFX' || container === 'BW64') {
    throw new WavFormatError('unsupported-container', `${container} container is not supported; use little-endian RIFF or RF64`);
  }
  if (container !== 'RIFF' && container !== 'RF64') {
    throw new WavFormatError('not-riff', 'not a WAV file: it does not start with "RIFF"');
  }
  if (bytes.length < 12) return null;
  if (fourcc(bytes, 8) !== 'WAVE') {
    throw new WavFormatError('not-wave', `RIFF file of type "${printable(fourcc(bytes, 8))}", not "WAVE"`);
  }
  if (container === 'RIFF' && u32(bytes, 4) < 4) {
    throw new WavFormatError('bad-chunk', `RIFF size ${u32(bytes, 4)} is too small to hold a WAVE file`);
  }
  let fmt: FmtFields | null = null;
  let ds64DataBytes: number | null = null;
  let at = 12;
  while (at + 8 <= bytes.length) {
    const id = fourcc(bytes, at);
    const size = u32(bytes, at + 4);
    const body = at + 8;
    if (id === 'data') {
      if (!fmt) throw new WavFormatError('missing-fmt', 'data chunk comes before any fmt chunk');
      return finishInfo(container, fmt, body, size, ds64DataBytes);
    }
    if (!/^[\x20-\x7e]{4}$/.test(id)) {
      throw new WavFormatError('bad-chunk', `unreadable chunk id at byte ${at}: the header is damaged`);
    }
    if (body + size > MAX_HEADER_BYTES) {
      throw new WavFormatError('header-too-large', `chunk "${id}" ends beyond the first ${MAX_HEADER_BYTES} bytes, before any samples`);
    }
    if (id === 'fmt ' || id === 'ds64') {
      if (body + size > bytes.length) return null;
      if (id === 'fmt ') fmt = parseFmt(bytes, body, size);
      else if (container === 'RF64') {
        if (size < 24) throw new WavFormatError('bad-chunk', `ds64 chunk is ${size} bytes; at least 24 expected`);
        ds64DataBytes = u64(bytes, body + 8);
      }
    }
    at = body + size + (size & 1);
  }
  if (at > MAX_HEADER_BYTES) {
    throw new WavFormatError('header-too-large', `no data chunk within the first ${MAX_HEADER_BYTES} bytes`);
  }
  return null;
}

function printable(s: string): string {
  return s.replace(/[^\x20-\x7e]/g, '?');
}

function finishInfo(
  container: string,
  fmt: FmtFields,
  dataOffset: number,
  declared: number,
  ds64DataBytes: number | null,
): WavInfo {
  let dataBytes = declared;
  if (container === 'RF64' && declared === 0xffffffff) {
    if (ds64DataBytes === null) throw new WavFormatError('bad-chunk', 'RF64 file without a ds64 chunk giving the data size');
    dataBytes = ds64DataBytes;
  } else if (declared === 0xffffffff) {
    throw new WavFormatError('bad-data-size', 'data chunk size is unset (0xFFFFFFFF): the recording was not finalised');
  }
  if (dataBytes > MAX_DATA_BYTES) {
    throw new WavFormatError('absurd-size', `data chunk declares ${dataBytes} bytes, more than the ${MAX_DATA_BYTES} accepted`);
  }
  if (dataBytes === 0) throw new WavFormatError('no-samples', 'data chunk holds no samples');
  if (dataBytes % fmt.blockAlign !== 0) {
    throw new WavFormatError(
      'bad-data-size',
      `data chunk size ${dataBytes} is not a whole number of ${fmt.blockAlign}-byte frames`,
    );
  }
  const frames = dataBytes / fmt.blockAlign;
  return {
    container: container === 'RF64' ? 'RF64' : 'RIFF',
    ...fmt,
    frames,
    durationS: frames / fmt.sampleRate,
    dataOffset,
    dataBytes,
  };
}

/**
 * Validates a WAV header from the first bytes of a file (64 KiB is plenty for ordinary files) and
 * returns what it declares. Pass `fileSize` to also check the samples fit in the file.
 */
export function readWavInfo(bytes: Uint8Array, options: { fileSize?: number } = {}): WavInfo {
  const info = parseWavHeader(bytes);
  const { fileSize } = options;
  if (!info) {
    if (fileSize !== undefined && bytes.length >= fileSize) {
      throw new WavFormatError('truncated', `file ends after ${fileSize} bytes, inside the header`);
    }
    throw new WavFormatError(
      'header-incomplete',
      `no complete fmt and data chunk headers in the first ${bytes.length} bytes (truncated file, or too few bytes given)`,
    );
  }
  if (fileSize !== undefined && info.dataOffset + info.dataBytes > fileSize) {
    throw new WavFormatError(
      'truncated',
      `data chunk declares ${info.dataBytes} bytes but the file holds only ${Math.max(0, fileSize - info.dataOffset)}`,
    );
  }
  return info;
}
