import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import {
  addClick,
  analyzeWavBytes,
  channelGroups,
  encodeWav,
  generateLogSweep,
  generateNoise,
  generateSine,
  mixInto,
  readWavInfo,
  WavFormatError,
  type AnalysisResult,
  type SampleFormat,
} from '../../analysis/index';
import {
  activeAnalysisThreads,
  analysisThreadTasks,
  analyzeFileInThreads,
  endIdleAnalysisThreads,
  THREAD_BREAK_EVEN_SAMPLES,
  warmAnalysis,
} from '../../server/worker/channel-threads';

// The analysis split across worker threads by channel (server/worker/channel-threads.ts) must give
// the single-thread result field by field — the same numbers, not close ones: each channel's
// arithmetic is its own (analysis/channel-split.ts). The reference is the plain single-thread
// pass, analyzeWavBytes, which never touches the thread code. Threads are forced on whatever the
// length (ignoreBreakEven), so short files exercise them.

const dir = mkdtempSync(join(tmpdir(), 'quietpath-threads-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const FS = 48000;

function save(name: string, bytes: Uint8Array): string {
  const path = join(dir, name);
  writeFileSync(path, bytes);
  return path;
}

async function expectSameAcrossThreads(name: string, bytes: Uint8Array, options = {}): Promise<AnalysisResult> {
  const path = save(name, bytes);
  const single = analyzeWavBytes(bytes, options);
  for (const how of [
    { threads: 2, shareCallingThread: true },
    { threads: 2, shareCallingThread: false },
    { threads: 4, shareCallingThread: true },
  ]) {
    const threaded = await analyzeFileInThreads(path, options, { ...how, ignoreBreakEven: true });
    expect(threaded, `${name} with ${JSON.stringify(how)}`).toStrictEqual(single);
    // JSON keeps every digit of every double: a second, independent comparison.
    expect(JSON.stringify(threaded)).toBe(JSON.stringify(single));
  }
  expect(activeAnalysisThreads()).toBe(0);
  return single;
}

describe('channel groups', () => {
  it('split neighbouring channels into groups differing by at most one', () => {
    expect(channelGroups(2, 2)).toEqual([[0], [1]]);
    expect(channelGroups(6, 4)).toEqual([[0, 1], [2, 3], [4], [5]]);
    expect(channelGroups(6, 2)).toEqual([
      [0, 1, 2],
      [3, 4, 5],
    ]);
    expect(channelGroups(1, 8)).toEqual([[0]]);
    expect(() => channelGroups(2, 0)).toThrow(/threads/);
  });
});

describe('threads give the single-thread result field by field', () => {
  it('clicks at the decoder blocks (8192 frames) and the detector sub-blocks (240 frames)', async () => {
    const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 4, channels: 2 });
    ch.forEach((c, i) => mixInto(c, generateNoise({ sampleRate: FS, levelDbfs: -100, seconds: 4, seed: 3 + i })[0]!));
    for (const frame of [8192, 3 * 8192 - 1, 5 * 8192 + 1, 240 * 300, 240 * 500 - 1]) addClick(ch[0]!, FS, { frame, amplitude: 0.01 });
    for (const frame of [2 * 8192, 7 * 8192, 240 * 611]) addClick(ch[1]!, FS, { frame, amplitude: -0.004, shape: 'burst' });
    const r = await expectSameAcrossThreads('clicks.wav', encodeWav(ch, FS, 24));
    // Known by construction: the threads are not merely agreeing on nothing.
    expect(r.channels.map((c) => c.clicks.count)).toEqual([5, 3]);
  });

  it('a log sweep, 20 Hz – 20 kHz, in both channels (the sweep spectrum joins too)', async () => {
    const ch = generateLogSweep({ sampleRate: FS, startHz: 20, endHz: 20000, levelDbfs: -6, seconds: 4, channels: 2 });
    const r = await expectSameAcrossThreads('sweep.wav', encodeWav(ch, FS, 24), { stimulus: 'sweep', sweepStartHz: 20, sweepEndHz: 20000 });
    expect(r.sweep?.channels).toHaveLength(2);
  });

  it('a 6-channel capture: a tone, hum, noise, and clicks in channel 4 only', async () => {
    const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 3, channels: 6, drivenChannels: [0] });
    mixInto(ch[1]!, generateSine({ sampleRate: FS, frequencyHz: 50, levelDbfs: -60, seconds: 3 })[0]!);
    ch.forEach((c, i) => mixInto(c, generateNoise({ sampleRate: FS, levelDbfs: -96, seconds: 3, seed: 20 + i })[0]!));
    for (const frame of [10_000, 50_000, 100_000]) addClick(ch[4]!, FS, { frame, amplitude: 0.02 });
    const r = await expectSameAcrossThreads('six.wav', encodeWav(ch, FS, 24), { drivenChannel: 0 });
    expect(r.channels.map((c) => c.clicks.count)).toEqual([0, 0, 0, 0, 3, 0]);
  });

  const formats: SampleFormat[] = [16, 24, 32, 'float32', 'float64'];
  for (const format of formats) {
    it(`${format === 'float32' || format === 'float64' ? format : `${format}-bit`} stereo with a click`, async () => {
      const ch = generateSine({ sampleRate: 44100, frequencyHz: 1000, levelDbfs: -3, seconds: 2, channels: 2, drivenChannels: [0] });
      mixInto(ch[1]!, generateNoise({ sampleRate: 44100, levelDbfs: -80, seconds: 2, seed: 9 })[0]!);
      addClick(ch[1]!, 44100, { frame: 30_000, amplitude: 0.05 });
      const r = await expectSameAcrossThreads(`fmt-${format}.wav`, encodeWav(ch, 44100, format));
      expect(r.channels[1]!.clicks.count).toBe(1);
    });
  }
});

describe('kept threads', () => {
  it('serve the next capture with the same results, and end when asked', async () => {
    const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 2, channels: 3, drivenChannels: [0] });
    addClick(ch[2]!, FS, { frame: 40_000, amplitude: 0.01 });
    const bytes = encodeWav(ch, FS, 24);
    const path = save('kept.wav', bytes);
    const how = { threads: 3, shareCallingThread: false, ignoreBreakEven: true, keepThreads: true };
    const first = await analyzeFileInThreads(path, {}, how);
    expect(activeAnalysisThreads()).toBe(3);
    const second = await analyzeFileInThreads(path, {}, how);
    // The same three threads, not three more.
    expect(activeAnalysisThreads()).toBe(3);
    expect(second).toStrictEqual(first);
    // A caller that keeps none borrows them and leaves them kept.
    expect(await analyzeFileInThreads(path, {}, { ...how, keepThreads: false })).toStrictEqual(first);
    expect(activeAnalysisThreads()).toBe(3);
    expect(first).toStrictEqual(analyzeWavBytes(bytes));
    await endIdleAnalysisThreads();
    expect(activeAnalysisThreads()).toBe(0);
  });
});

describe('threads warmed up at start', () => {
  it('are kept, take a capture far below the break-even, give the single-thread result, and end when asked', async () => {
    const warm = await warmAnalysis({ seconds: 2, threads: 2, rounds: 2 });
    expect(warm.threads).toBe(2);
    expect(activeAnalysisThreads()).toBe(2);
    // The warm-up capture runs the tone, noise and click-check paths: a −10 dBFS tone in channel
    // 0 (AES17: a sine's RMS in dBFS is its level), and a click every 1.3 s in both channels
    // (at 0.325 s and 1.625 s in 2 s), which the join in this thread reports.
    expect(warm.result.channels[0]!.rmsDbfs).toBeCloseTo(-10, 2);
    expect(warm.result.channels.map((c) => c.clicks.count)).toEqual([2, 2]);
    const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 2, channels: 2 });
    ch.forEach((c, i) => mixInto(c, generateNoise({ sampleRate: FS, levelDbfs: -100, seconds: 2, seed: 21 + i })[0]!));
    addClick(ch[1]!, FS, { frame: 50_000, amplitude: 0.01 });
    const bytes = encodeWav(ch, FS, 24);
    expect(2 * FS * 2).toBeLessThan(THREAD_BREAK_EVEN_SAMPLES);
    const path = save('warm.wav', bytes);
    const server = { threads: 2, shareCallingThread: false, keepThreads: true };
    const before = analysisThreadTasks();
    const result = await analyzeFileInThreads(path, {}, server);
    // Both channels went to the two warm threads, which are still there, not to new ones.
    expect(analysisThreadTasks() - before).toBe(2);
    expect(activeAnalysisThreads()).toBe(2);
    expect(result).toStrictEqual(analyzeWavBytes(bytes));
    expect(result.channels[1]!.clicks.count).toBe(1);
    // A mono capture is one share: a caller that only waits hands it to one warm thread.
    const mono = encodeWav([ch[1]!], FS, 24);
    const monoPath = save('warm-mono.wav', mono);
    const beforeMono = analysisThreadTasks();
    expect(await analyzeFileInThreads(monoPath, {}, server)).toStrictEqual(analyzeWavBytes(mono));
    expect(analysisThreadTasks() - beforeMono).toBe(1);
    // A command-line run measures it itself, and starts no thread for it.
    expect(await analyzeFileInThreads(monoPath, {}, { threads: 2, ignoreBreakEven: true })).toStrictEqual(analyzeWavBytes(mono));
    expect(analysisThreadTasks() - beforeMono).toBe(1);
    expect(activeAnalysisThreads()).toBe(2);
    // A caller that keeps no threads may use them, but they stay, warm.
    const borrowed = analysisThreadTasks();
    expect(await analyzeFileInThreads(path, {}, { threads: 2, shareCallingThread: false, ignoreBreakEven: true })).toStrictEqual(result);
    expect(analysisThreadTasks() - borrowed).toBe(2);
    expect(activeAnalysisThreads()).toBe(2);
    await endIdleAnalysisThreads();
    expect(activeAnalysisThreads()).toBe(0);
    // Without warm threads to reuse, the same short capture stays in the calling thread.
    const alone = analysisThreadTasks();
    expect(await analyzeFileInThreads(path, {}, server)).toStrictEqual(result);
    expect(analysisThreadTasks()).toBe(alone);
    expect(activeAnalysisThreads()).toBe(0);
  });
});

describe('a thread that fails', () => {
  it('a truncated file: the damaged-file error comes back as itself and no thread is left running', async () => {
    const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 2, channels: 2 });
    const good = encodeWav(ch, FS, 24);
    const path = save('cut.wav', good.subarray(0, good.length - 6000));
    const err = await analyzeFileInThreads(path, {}, { threads: 2, ignoreBreakEven: true, shareCallingThread: false }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(WavFormatError);
    expect((err as WavFormatError).code).toBe('truncated');
    expect((err as Error).message).toMatch(/declares .* but the file ends after/);
    expect(activeAnalysisThreads()).toBe(0);
  });

  it('a NaN in channel 1 of a float file: every thread stops with the same frame and channel', async () => {
    const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 1, channels: 2 });
    const f32 = encodeWav(ch, FS, 'float32');
    // Frame 100, channel 1: 4-byte samples, 2 per frame, after the header.
    new DataView(f32.buffer).setFloat32(readWavInfo(f32).dataOffset + (100 * 2 + 1) * 4, Number.NaN, true);
    const path = save('nan.wav', f32);
    for (const shareCallingThread of [true, false]) {
      const err = await analyzeFileInThreads(path, {}, { threads: 2, ignoreBreakEven: true, shareCallingThread }).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(WavFormatError);
      expect((err as Error).message).toMatch(/frame 100 .*channel 1/);
      expect(activeAnalysisThreads()).toBe(0);
    }
  });
});
