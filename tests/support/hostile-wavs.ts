/**
 * A corpus of malformed and hostile "WAV" files, each built byte by byte so the fault is known by
 * construction. Layout per Microsoft's RIFF/WAVE description: "RIFF" size "WAVE", then chunks
 * (id, little-endian size, body, pad byte when the size is odd); fmt = format tag, channels,
 * sample rate, byte rate, block align, bits per sample [, cbSize, extension].
 */

export interface HostileFile {
  name: string;
  /** What is wrong, for the test's name. */
  fault: string;
  bytes: Uint8Array;
}

interface Fmt {
  tag?: number;
  channels?: number;
  rate?: number;
  bits?: number;
  blockAlign?: number;
  byteRate?: number;
  extension?: Uint8Array;
}

const ascii = (s: string) => new TextEncoder().encode(s);
const u16 = (n: number) => new Uint8Array(new Uint16Array([n]).buffer);
const u32 = (n: number) => new Uint8Array(new Uint32Array([n >>> 0]).buffer);

function concat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

function chunk(id: string, body: Uint8Array, declared = body.length): Uint8Array {
  return concat(ascii(id), u32(declared), body, body.length % 2 ? new Uint8Array(1) : new Uint8Array(0));
}

function fmtBody(f: Fmt): Uint8Array {
  const channels = f.channels ?? 2;
  const bits = f.bits ?? 16;
  const rate = f.rate ?? 48_000;
  const blockAlign = f.blockAlign ?? channels * Math.ceil(bits / 8);
  const parts: Uint8Array[] = [u16(f.tag ?? 1), u16(channels), u32(rate), u32(f.byteRate ?? rate * blockAlign), u16(blockAlign), u16(bits)];
  if (f.extension) parts.push(f.extension);
  return concat(...parts);
}

function riff(...chunks: Uint8Array[]): Uint8Array {
  const body = concat(ascii('WAVE'), ...chunks);
  return concat(ascii('RIFF'), u32(body.length), body);
}

/** Samples of a quiet 16-bit stereo tone, enough to be a plausible body. */
function pcm16(frames: number): Uint8Array {
  const s = new Int16Array(frames * 2);
  for (let i = 0; i < frames; i++) s[2 * i] = s[2 * i + 1] = Math.round(3000 * Math.sin((2 * Math.PI * 997 * i) / 48_000));
  return new Uint8Array(s.buffer);
}

function floats(values: number[], bits: 32 | 64): Uint8Array {
  const arr = bits === 32 ? new Float32Array(values) : new Float64Array(values);
  return new Uint8Array(arr.buffer);
}

function extensible(subTag: number, cbSize = 22, valid = 16, tail = [0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71]) {
  return concat(u16(cbSize), u16(valid), u32(3), u16(subTag), new Uint8Array(tail));
}

const good = () => riff(chunk('fmt ', fmtBody({})), chunk('data', pcm16(4800)));

export function hostileCorpus(): HostileFile[] {
  const tone = pcm16(4800);
  const files: HostileFile[] = [
    { name: 'empty.wav', fault: 'empty file', bytes: new Uint8Array(0) },
    { name: 'one-byte.wav', fault: 'a single byte', bytes: new Uint8Array([0x52]) },
    { name: 'riff-only.wav', fault: 'header cut after "RIFF"', bytes: ascii('RIFF') },
    { name: 'header-cut.wav', fault: 'header cut inside fmt', bytes: good().slice(0, 30) },
    { name: 'not-wave.wav', fault: 'RIFF but not WAVE', bytes: concat(ascii('RIFF'), u32(12), ascii('AVI LIST'), u32(0)) },
    { name: 'rifx.wav', fault: 'big-endian RIFX container', bytes: concat(ascii('RIFX'), good().slice(4)) },
    { name: 'notes.wav', fault: 'plain text with a .wav name', bytes: ascii('bench notes: crackle on input 2\n'.repeat(20)) },
    { name: 'picture.wav', fault: 'a PNG with a .wav name', bytes: concat(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), new Uint8Array(200)) },
    { name: 'compressed.wav', fault: 'an MPEG stream with a .wav name', bytes: concat(ascii('ID3'), new Uint8Array([4, 0, 0, 0, 0, 0, 0]), new Uint8Array(300).fill(0xff)) },
    { name: 'no-fmt.wav', fault: 'no fmt chunk', bytes: riff(chunk('data', tone)) },
    { name: 'no-data.wav', fault: 'no data chunk', bytes: riff(chunk('fmt ', fmtBody({}))) },
    { name: 'empty-data.wav', fault: 'data chunk with no samples', bytes: riff(chunk('fmt ', fmtBody({})), chunk('data', new Uint8Array(0))) },
    { name: 'fmt-short.wav', fault: 'fmt chunk of 8 bytes', bytes: riff(chunk('fmt ', fmtBody({}).slice(0, 8)), chunk('data', tone)) },
    { name: 'fmt-oversize.wav', fault: 'fmt chunk size past the end of the file', bytes: riff(chunk('fmt ', fmtBody({}), 0x7fff_fff0)) },
    { name: 'list-overrun.wav', fault: 'LIST chunk size past the end of the file', bytes: riff(chunk('fmt ', fmtBody({})), chunk('LIST', ascii('INFOxxxx'), 0x7fff_0000)) },
    { name: 'data-overrun.wav', fault: 'data size larger than the file', bytes: riff(chunk('fmt ', fmtBody({})), concat(ascii('data'), u32(tone.length * 50), tone)) },
    { name: 'data-huge.wav', fault: 'declared data size of 4 GiB', bytes: riff(chunk('fmt ', fmtBody({})), concat(ascii('data'), u32(0xffff_ffff), tone)) },
    { name: 'zero-channels.wav', fault: 'zero channels', bytes: riff(chunk('fmt ', fmtBody({ channels: 0, blockAlign: 2 })), chunk('data', tone)) },
    { name: 'many-channels.wav', fault: '65535 channels', bytes: riff(chunk('fmt ', fmtBody({ channels: 65535, blockAlign: 65535 * 2 & 0xffff })), chunk('data', tone)) },
    { name: 'nine-channels.wav', fault: '9 channels (above 8)', bytes: riff(chunk('fmt ', fmtBody({ channels: 9 })), chunk('data', pcm16(900))) },
    { name: 'rate-zero.wav', fault: '0 Hz sample rate', bytes: riff(chunk('fmt ', fmtBody({ rate: 0 })), chunk('data', tone)) },
    { name: 'rate-low.wav', fault: '4 kHz sample rate', bytes: riff(chunk('fmt ', fmtBody({ rate: 4000 })), chunk('data', tone)) },
    { name: 'rate-absurd.wav', fault: '3 GHz sample rate', bytes: riff(chunk('fmt ', fmtBody({ rate: 3_000_000_000 })), chunk('data', tone)) },
    { name: 'bits-zero.wav', fault: '0 bits per sample', bytes: riff(chunk('fmt ', fmtBody({ bits: 0, blockAlign: 4 })), chunk('data', tone)) },
    { name: 'bits-12.wav', fault: '12-bit PCM', bytes: riff(chunk('fmt ', fmtBody({ bits: 12, blockAlign: 4 })), chunk('data', tone)) },
    { name: 'bits-64-pcm.wav', fault: '64-bit integer PCM', bytes: riff(chunk('fmt ', fmtBody({ bits: 64 })), chunk('data', tone)) },
    { name: 'odd-block-align.wav', fault: 'block align 3 for 16-bit stereo', bytes: riff(chunk('fmt ', fmtBody({ blockAlign: 3 })), chunk('data', tone)) },
    { name: 'adpcm.wav', fault: 'ADPCM encoding', bytes: riff(chunk('fmt ', fmtBody({ tag: 2, bits: 4, blockAlign: 2048 })), chunk('data', tone)) },
    { name: 'mp3-in-wav.wav', fault: 'MPEG layer 3 inside WAV', bytes: riff(chunk('fmt ', fmtBody({ tag: 0x55, bits: 0, blockAlign: 1 })), chunk('data', tone)) },
    { name: 'unknown-tag.wav', fault: 'unknown format tag 0x1234', bytes: riff(chunk('fmt ', fmtBody({ tag: 0x1234 })), chunk('data', tone)) },
    { name: 'ext-unknown-guid.wav', fault: 'WAVE_FORMAT_EXTENSIBLE with an unknown sub-format', bytes: riff(chunk('fmt ', fmtBody({ tag: 0xfffe, extension: extensible(1, 22, 16, new Array(14).fill(0x5a)) })), chunk('data', tone)) },
    { name: 'ext-short.wav', fault: 'WAVE_FORMAT_EXTENSIBLE with its extension cut short', bytes: riff(chunk('fmt ', fmtBody({ tag: 0xfffe, extension: concat(u16(22), u16(16)) })), chunk('data', tone)) },
    { name: 'float-nan.wav', fault: 'float32 samples that are NaN', bytes: riff(chunk('fmt ', fmtBody({ tag: 3, bits: 32, channels: 1 })), chunk('data', floats([0.1, 0.2, NaN, 0.1, ...new Array(4000).fill(0.05)], 32))) },
    { name: 'float-inf.wav', fault: 'float32 samples that are infinite', bytes: riff(chunk('fmt ', fmtBody({ tag: 3, bits: 32, channels: 1 })), chunk('data', floats([...new Array(4000).fill(0.05), Infinity], 32))) },
    { name: 'double-nan.wav', fault: 'float64 samples that are NaN', bytes: riff(chunk('fmt ', fmtBody({ tag: 3, bits: 64, channels: 1 })), chunk('data', floats([...new Array(3000).fill(0.05), NaN, -Infinity], 64))) },
    { name: 'data-before-fmt.wav', fault: 'data chunk before fmt chunk', bytes: riff(chunk('data', tone), chunk('fmt ', fmtBody({}))) },
    { name: 'riff-size-zero.wav', fault: 'RIFF size of 0 with nothing after WAVE', bytes: concat(ascii('RIFF'), u32(0), ascii('WAVE')) },
  ];
  return files;
}

/** A well-formed 16-bit stereo capture of the given length, for the size-limit check. */
export function plainWav(frames: number): Uint8Array {
  return riff(chunk('fmt ', fmtBody({})), chunk('data', pcm16(frames)));
}
