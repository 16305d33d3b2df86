import { afterAll, describe, expect, it } from 'vitest';
import wavefile from 'wavefile';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateSine } from '../../analysis/generate';
import { encodeWav, type SampleFormat } from '../../analysis/wav-encode';
import { readWavInfo, WavFormatError, type WavErrorCode } from '../../analysis/wav-header';
import { soxDir } from './helpers';

// Bad input must give a WavFormatError naming the problem — never a crash, never a number.

const dir = soxDir();
afterAll(() => dir.remove());

function wav(format: SampleFormat = 16, channels = 2, extensible = false): Uint8Array {
  const tone = generateSine({ sampleRate: 48000, frequencyHz: 997, levelDbfs: -6, seconds: 0.05, channels });
  return encodeWav(tone, 48000, format, { extensible });
}

/** Offsets in a plain 44-byte header (fmt at 12, data at 36). */
const AT = { riffSize: 4, wave: 8, fmtSize: 16, tag: 20, channels: 22, rate: 24, align: 32, bits: 34, dataSize: 40 } as const;

function patch(bytes: Uint8Array, at: number, value: number, width: 2 | 4): Uint8Array {
  const out = bytes.slice();
  const dv = new DataView(out.buffer);
  if (width === 2) dv.setUint16(at, value, true);
  else dv.setUint32(at, value, true);
  return out;
}

function expectCode(run: () => unknown, code: WavErrorCode, mentions?: RegExp): void {
  let caught: unknown = null;
  try {
    run();
  } catch (e) {
    caught = e;
  }
  expect(caught, `expected WavFormatError ${code}`).toBeInstanceOf(WavFormatError);
  const e = caught as WavFormatError;
  expect(e.code).toBe(code);
  expect(e.message.length).toBeGreaterThan(10);
  if (mentions) expect(e.message).toMatch(mentions);
}

function both(bytes: Uint8Array, code: WavErrorCode, mentions?: RegExp): void {
  expectCode(() => readWavInfo(bytes, { fileSize: bytes.length }), code, mentions);
  expectCode(() => analyzeWavBytes(bytes), code, mentions);
}

describe('refusing bad files with a named problem', () => {
  it('not RIFF/WAVE', () => {
    both(new TextEncoder().encode('this is a text file, not audio at all'), 'not-riff', /RIFF/);
    const avi = wav();
    avi.set(new TextEncoder().encode('AVI '), AT.wave);
    both(avi, 'not-wave', /AVI/);
    const rifx = wav();
    rifx.set(new TextEncoder().encode('RIFX'), 0);
    both(rifx, 'unsupported-container', /RIFX/);
  });

  it('empty and truncated files', () => {
    expectCode(() => analyzeWavBytes(new Uint8Array(0)), 'truncated', /empty/);
    const good = wav();
    both(good.subarray(0, 30), 'truncated');
    expectCode(() => readWavInfo(good.subarray(0, 30)), 'header-incomplete');
    // Samples cut short: the header promises more than the file holds.
    both(good.subarray(0, good.length - 100), 'truncated', /declares/);
  });

  it('zero or too many channels', () => {
    both(patch(wav(), AT.channels, 0, 2), 'no-channels');
    both(patch(patch(wav(), AT.channels, 9, 2), AT.align, 18, 2), 'too-many-channels', /9/);
  });

  it('sample rates outside 8–384 kHz', () => {
    both(patch(wav(), AT.rate, 4000, 4), 'unsupported-sample-rate', /4000/);
    both(patch(wav(), AT.rate, 768000, 4), 'unsupported-sample-rate', /768000/);
  });

  it('unsupported encodings: ADPCM from sox and wavefile, 12-bit PCM, 16-bit float, odd GUID', () => {
    dir.sox('-n', '-r', '8000', '-e', 'ms-adpcm', dir.path('ms.wav'), 'synth', '0.2', 'sine', '440');
    both(dir.read('ms.wav'), 'unsupported-encoding', /ADPCM.*0x0002/);
    const wf = new wavefile.WaveFile();
    wf.fromScratch(1, 8000, '16', new Int16Array(800).map((_, i) => Math.round(8000 * Math.sin(i / 5))));
    wf.toIMAADPCM();
    both(wf.toBuffer(), 'unsupported-encoding', /IMA ADPCM/);
    both(patch(wav(), AT.bits, 12, 2), 'unsupported-bit-depth', /12-bit/);
    both(patch(patch(wav(), AT.tag, 3, 2), AT.bits, 16, 2), 'unsupported-bit-depth', /16-bit float/);
    const ext = wav(24, 2, true);
    ext[12 + 8 + 24 + 3] = 0x7f; // first GUID byte after the 16-bit sub-format tag
    both(ext, 'unsupported-encoding', /GUID/);
  });

  it('inconsistent sizes', () => {
    both(patch(wav(), AT.align, 3, 2), 'bad-block-align', /block align/);
    both(patch(wav(), AT.fmtSize, 8, 4), 'bad-fmt', /8 bytes/);
    const good = wav();
    const dataBytes = good.length - 44;
    both(patch(good, AT.dataSize, dataBytes - 1, 4), 'bad-data-size', /whole number/);
    both(patch(good, AT.dataSize, 0, 4), 'no-samples');
    both(patch(good, AT.dataSize, 0xffffffff, 4), 'bad-data-size', /unset/);
    expectCode(() => readWavInfo(patch(good, AT.riffSize, 2, 4)), 'bad-chunk');
  });

  it('data before fmt, and a header chunk larger than 1 MiB', () => {
    const good = wav();
    // WAVE, then the data chunk, then fmt.
    const swapped = new Uint8Array(good.length);
    swapped.set(good.subarray(0, 12));
    swapped.set(good.subarray(36), 12);
    swapped.set(good.subarray(12, 36), 12 + good.length - 36);
    both(swapped, 'missing-fmt');
    const big = new Uint8Array(60);
    big.set(good.subarray(0, 12));
    big.set(new TextEncoder().encode('LIST'), 12);
    new DataView(big.buffer).setUint32(16, 2 ** 21, true);
    expectCode(() => readWavInfo(big), 'header-too-large');
  });

  it('NaN and infinite float samples name the frame and channel', () => {
    const f32 = wav('float32');
    new DataView(f32.buffer).setFloat32(44 + (100 * 2 + 1) * 4, Number.NaN, true);
    expectCode(() => analyzeWavBytes(f32), 'non-finite-sample', /frame 100 .*channel 1/);
    const f64 = wav('float64', 1);
    new DataView(f64.buffer).setFloat64(44 + 7 * 8, -Infinity, true);
    expectCode(() => analyzeWavBytes(f64), 'non-finite-sample', /frame 7 .*channel 0/);
  });

  it('RF64 with a ds64 chunk is read; an absurd ds64 size is refused', () => {
    const riff = wav(24, 2, false);
    const dataBytes = riff.length - 44;
    const rf = new Uint8Array(riff.length + 36);
    const dv = new DataView(rf.buffer);
    rf.set(new TextEncoder().encode('RF64'), 0);
    dv.setUint32(4, 0xffffffff, true);
    rf.set(new TextEncoder().encode('WAVEds64'), 8);
    dv.setUint32(16, 28, true);
    dv.setUint32(20, rf.length - 8, true); // RIFF size, low word
    dv.setUint32(28, dataBytes, true); // data size, low word
    dv.setUint32(36, dataBytes / 6, true); // sample count, low word
    rf.set(riff.subarray(12), 48); // fmt + data chunks
    dv.setUint32(48 + 24 + 4, 0xffffffff, true); // data size lives in ds64
    const info = readWavInfo(rf, { fileSize: rf.length });
    expect(info).toMatchObject({ container: 'RF64', frames: dataBytes / 6, channels: 2, bitsPerSample: 24 });
    const a = analyzeWavBytes(rf);
    const b = analyzeWavBytes(riff);
    expect(a.channels[0]!.rmsDbfs).toBe(b.channels[0]!.rmsDbfs);
    dv.setUint32(32, 2 ** 20, true); // data size high word: 2^52 bytes
    expectCode(() => readWavInfo(rf), 'absurd-size');
  });
});
