import { afterAll, describe, expect, it } from 'vitest';
import wavefile from 'wavefile';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateNoise, generateSine } from '../../analysis/generate';
import { FrameDecoder } from '../../analysis/wav-decode';
import { encodeWav, type SampleFormat } from '../../analysis/wav-encode';
import { readWavInfo } from '../../analysis/wav-header';
import { soxDir, soxStats, SOX_RMS_TO_DBFS } from './helpers';

// Reading every supported encoding, checked two independent ways:
// - files written by Debian's sox, with RMS and peak compared to `sox FILE -n stats`;
// - our decoder against wavefile's (an independent implementation) on the same bytes.

const dir = soxDir();
afterAll(() => dir.remove());

/** All samples of a file, planar, through our block decoder. */
function decodeAll(bytes: Uint8Array): Float64Array[] {
  const info = readWavInfo(bytes);
  const out = Array.from({ length: info.channels }, () => new Float64Array(info.frames));
  const d = new FrameDecoder(info, (block, start, length) => {
    block.forEach((b, c) => out[c]!.set(b.subarray(0, length), start));
  }, 1000);
  d.push(bytes.subarray(info.dataOffset));
  d.finish();
  return out;
}

// sox prints RMS and peak in dB to 2 decimals: agreement within 0.006 dB covers its rounding.
const SOX_DB_TOLERANCE = 0.006;

describe('reading files written by sox (compared with sox stats)', () => {
  const cases: { name: string; args: string[]; channels: number; rate: number; bits: number; format: string; extensible?: boolean }[] = [
    { name: 'u8', args: ['-b', '8', '-e', 'unsigned-integer'], channels: 1, rate: 8000, bits: 8, format: 'pcm' },
    { name: 's16', args: ['-b', '16'], channels: 2, rate: 44100, bits: 16, format: 'pcm', extensible: false },
    { name: 's24', args: ['-b', '24'], channels: 2, rate: 96000, bits: 24, format: 'pcm', extensible: true },
    { name: 's32', args: ['-b', '32'], channels: 1, rate: 192000, bits: 32, format: 'pcm' },
    { name: 'f32', args: ['-b', '32', '-e', 'floating-point'], channels: 2, rate: 48000, bits: 32, format: 'float' },
    { name: 'f64', args: ['-b', '64', '-e', 'floating-point'], channels: 1, rate: 48000, bits: 64, format: 'float' },
    { name: 'alaw', args: ['-b', '8', '-e', 'a-law'], channels: 1, rate: 8000, bits: 8, format: 'alaw' },
    { name: 'ulaw', args: ['-b', '8', '-e', 'u-law'], channels: 1, rate: 8000, bits: 8, format: 'mulaw' },
    { name: 's16x8', args: ['-b', '16'], channels: 8, rate: 48000, bits: 16, format: 'pcm', extensible: true },
    { name: 's24-384k', args: ['-b', '24'], channels: 1, rate: 384000, bits: 24, format: 'pcm' },
    { name: 's16-plain', args: ['-t', 'wavpcm', '-b', '16'], channels: 4, rate: 32000, bits: 16, format: 'pcm', extensible: false },
  ];
  for (const c of cases) {
    it(`${c.name}: ${c.channels} ch, ${c.rate} Hz — header, RMS and peak per channel`, () => {
      const file = dir.path(`${c.name}.wav`);
      // Different tone level per channel (remix scales each), plus DC so the DC offset is non-trivial.
      const remix = Array.from({ length: c.channels }, (_, i) => `1v${(0.9 - 0.1 * i).toFixed(2)}`);
      dir.sox('-n', '-r', String(c.rate), ...c.args, file, 'synth', '0.5', 'sine', '997', 'vol', '0.5', 'dcshift', '0.05', 'remix', ...remix);
      const bytes = dir.read(`${c.name}.wav`);
      const info = readWavInfo(bytes, { fileSize: bytes.length });
      expect(info).toMatchObject({ channels: c.channels, sampleRate: c.rate, bitsPerSample: c.bits, format: c.format });
      if (c.extensible !== undefined) expect(info.extensible).toBe(c.extensible);
      expect(info.frames).toBe(Math.round(0.5 * c.rate));
      const stats = soxStats(file);
      const result = analyzeWavBytes(bytes);
      expect(stats).toHaveLength(c.channels);
      result.channels.forEach((ch, i) => {
        expect(Math.abs(ch.rmsDbfs! - (stats[i]!.rmsLevDb + SOX_RMS_TO_DBFS))).toBeLessThanOrEqual(SOX_DB_TOLERANCE);
        expect(Math.abs(ch.peakDbfs! - stats[i]!.pkLevDb)).toBeLessThanOrEqual(SOX_DB_TOLERANCE);
        // sox prints the DC offset to 6 decimals.
        expect(Math.abs(ch.dcOffset - stats[i]!.dcOffset)).toBeLessThanOrEqual(6e-6);
      });
    });
  }
});

describe('decoder against wavefile (independent reader) on our encoder’s files', () => {
  const formats: { format: SampleFormat; code: string }[] = [
    { format: 8, code: '8' },
    { format: 16, code: '16' },
    { format: 24, code: '24' },
    { format: 32, code: '32' },
    { format: 'float32', code: '32f' },
    { format: 'float64', code: '64' },
  ];
  for (const f of formats) {
    it(`${f.format}: same samples as wavefile reads, and within half an LSB of the source`, () => {
      const sources = [
        generateSine({ sampleRate: 44100, frequencyHz: 440, levelDbfs: -3, seconds: 0.05 })[0]!,
        generateNoise({ sampleRate: 44100, levelDbfs: -10, seconds: 0.05, seed: 9 })[0]!,
      ];
      // Plain (non-extensible) header: wavefile recognises float only by format tag 3.
      const bytes = encodeWav(sources, 44100, f.format, { extensible: false });
      const ours = decodeAll(bytes);
      const wf = new wavefile.WaveFile(bytes);
      expect(wf.bitDepth).toBe(f.code);
      const theirs = wf.getSamples(false, Float64Array) as unknown as Float64Array[];
      // wavefile gives integer codes for PCM (8-bit unsigned, offset 128) and floats as stored.
      const bits = typeof f.format === 'number' ? f.format : 0;
      const toUnit = (w: number): number => (bits === 8 ? (w - 128) / 128 : bits ? w / 2 ** (bits - 1) : w);
      // Rounding to the nearest code is within half an LSB; float32 keeps 24 significant bits.
      const tolerance = bits ? 2 ** -bits : f.format === 'float32' ? 2 ** -24 : 0;
      for (let c = 0; c < 2; c++) {
        for (let n = 0; n < sources[c]!.length; n++) {
          expect(ours[c]![n]).toBe(toUnit(theirs[c]![n]!));
          expect(Math.abs(ours[c]![n]! - sources[c]![n]!)).toBeLessThanOrEqual(tolerance);
        }
      }
    });
  }
});

describe('24-bit decoding: word-wise fast path and byte-wise path agree with wavefile', () => {
  // Random bytes reach every code, including −2^23 and 2^23 − 1. Fed in uneven chunks, the data
  // starts at 4-byte boundaries (the word path) and off them (the byte path), with frames split
  // across chunks; mono and stereo have the word path, three channels only the byte path.
  for (const channels of [1, 2, 3]) {
    it(`${channels} channel(s), random codes, uneven chunks: same samples as wavefile`, () => {
      const frames = 5003;
      const bytes = encodeWav(Array.from({ length: channels }, () => new Float64Array(frames)), 48000, 24, { extensible: false });
      const info = readWavInfo(bytes);
      let seed = 12345 + channels;
      for (let i = info.dataOffset; i < bytes.length; i++) {
        seed = (seed * 1103515245 + 12345) >>> 0;
        bytes[i] = seed >>> 24;
      }
      const theirs = new wavefile.WaveFile(bytes).getSamples(false, Float64Array) as unknown as Float64Array[] | Float64Array;
      const reference = channels === 1 ? [theirs as Float64Array] : (theirs as Float64Array[]);
      const ours = Array.from({ length: channels }, () => new Float64Array(frames));
      const d = new FrameDecoder(info, (block, start, length) => block.forEach((b, c) => ours[c]!.set(b.subarray(0, length), start)), 1024);
      const data = bytes.subarray(info.dataOffset);
      for (let at = 0, k = 0; at < data.length; k++) {
        const size = [4096, 7, 1, 2048, 13, 6000][k % 6]!;
        // A fresh copy at offset 0 or 1 of its buffer, so the chunk's own alignment varies too.
        const shift = k % 2;
        const chunk = new Uint8Array(size + shift);
        const piece = data.subarray(at, at + size);
        chunk.set(piece, shift);
        d.push(chunk.subarray(shift, shift + piece.length));
        at += piece.length;
      }
      d.finish();
      for (let c = 0; c < channels; c++) {
        for (let n = 0; n < frames; n++) expect(ours[c]![n]).toBe(reference[c]![n]! / 8388608);
      }
    });
  }
});
