/**
 * The live bench's bookkeeping (web/src/workers/live-window.ts): overlapping analysis windows must
 * count each click once, and the soak recorder's chunks must join up to exactly the recorded
 * stretch. Clicks are built into the signal at known frames (analysis/generate.ts addClick), so
 * the expected counts are known by construction.
 */
import { describe, expect, it } from 'vitest';
import { addClick, analyzeWavBytes, encodeSamples, encodeWav, generateSine } from '../../analysis/index';
import { ChunkRecorder, ClickTally, SlidingWindow } from '../../web/src/workers/live-window';

const FS = 48_000;
const BLOCK = 2048;

/** 6 s stereo: a −20 dBFS tone on the left with bursts at the given frames, right silent. */
function stream(clickFrames: number[]): Float32Array[] {
  const ch = generateSine({ sampleRate: FS, seconds: 6, channels: 2, frequencyHz: 997, levelDbfs: -20, drivenChannels: [0] });
  for (const frame of clickFrames) addClick(ch[0]!, FS, { frame, amplitude: 0.05, shape: 'burst' });
  return ch.map((c) => Float32Array.from(c));
}

/** Plays the stream through the worker's loop: 1 s window, analysis every `hop` frames. */
function play(samples: Float32Array[], hop: number, span?: [number, number]): ClickTally {
  const window = new SlidingWindow(2, FS);
  const tally = new ClickTally(2, FS, Math.round(0.2 * FS));
  if (span) tally.startSpan(span[0], span[1]);
  let since = 0;
  const measure = (final: boolean) => {
    const { start, channels } = window.snapshot();
    const result = analyzeWavBytes(encodeWav(channels, FS, 'float32'), { stimulus: 'tone' });
    tally.take(start, window.total, result.channels.map((c) => c.clicks), final);
  };
  for (let at = 0; at < samples[0]!.length; at += BLOCK) {
    window.push(samples.map((c) => c.subarray(at, at + BLOCK)));
    since += Math.min(BLOCK, samples[0]!.length - at);
    if (since >= hop) {
      since = 0;
      measure(false);
    }
  }
  measure(true);
  return tally;
}

describe('live click tally', () => {
  // 47 900 and 48 500 sit either side of a window edge (48 000) yet 12.5 ms apart: the detector
  // joins crackle closer than 10 ms into one event.
  const clicks = [12_000, 47_900, 48_500, 100_000, 150_001, 200_000, 250_000];

  it('overlapping quarter-second windows count each of 7 clicks exactly once', () => {
    const tally = play(stream(clicks), FS / 4);
    expect(tally.totals).toEqual([7, 0]);
    expect(tally.incomplete).toBe(false);
  });

  it('a slow machine measuring every half second still counts every click once', () => {
    const tally = play(stream(clicks), FS / 2);
    expect(tally.totals).toEqual([7, 0]);
    expect(tally.incomplete).toBe(false);
  });

  it('hops longer than the window allows skip stretches and say so', () => {
    const tally = play(stream(clicks), FS);
    expect(tally.incomplete).toBe(true);
    expect(tally.totals[0]!).toBeLessThan(7);
  });

  it('a soak span counts only the clicks inside it', () => {
    // Frames [48 000, 200 000): the clicks at 48 500, 100 000 and 150 001.
    const tally = play(stream(clicks), FS / 4, [48_000, 200_000]);
    expect(tally.spanClicks()).toEqual([3, 0]);
    expect(tally.spanComplete()).toBe(true);
    expect(tally.totals).toEqual([7, 0]);
  });
});

describe('sliding window', () => {
  it('holds the last second in time order across the ring seam', () => {
    const w = new SlidingWindow(1, 1000);
    const ramp = Float32Array.from({ length: 2500 }, (_, i) => i);
    for (let at = 0; at < 2500; at += 300) w.push([ramp.subarray(at, at + 300)]);
    const { start, channels } = w.snapshot();
    expect(start).toBe(1500);
    expect(Array.from(channels[0]!)).toEqual(Array.from(ramp.subarray(1500)));
  });
});

describe('soak chunk recorder', () => {
  it('chunks join to exactly the recorded frames, as one encode of the whole stretch', () => {
    const samples = stream([]);
    const chunks: { seq: number; bytes: Uint8Array; frames: number }[] = [];
    const from = 5000;
    const to = from + Math.round(2.5 * FS);
    const rec = new ChunkRecorder(from, to, 'pcm24', FS, (seq, bytes, frames) => chunks.push({ seq, bytes, frames }));
    for (let at = 0; at < samples[0]!.length && !rec.done; at += BLOCK) rec.push(samples.map((c) => c.subarray(at, at + BLOCK)), at);
    expect(rec.done).toBe(true);
    expect(chunks.map((c) => c.seq)).toEqual([0, 1, 2]);
    expect(chunks.reduce((n, c) => n + c.frames, 0)).toBe(to - from);
    const joined = new Uint8Array(chunks.reduce((n, c) => n + c.bytes.length, 0));
    let at = 0;
    for (const c of chunks) {
      joined.set(c.bytes, at);
      at += c.bytes.length;
    }
    // Buffer.equals: toEqual on 720 kB of bytes is slow.
    expect(Buffer.from(joined).equals(Buffer.from(encodeSamples(samples, 24, from, to - from)))).toBe(true);
  });

  it('stopping early sends what is pending and ends the recording there', () => {
    const samples = stream([]);
    const frames: number[] = [];
    const rec = new ChunkRecorder(0, 10 * FS, 'pcm16', FS, (_seq, bytes, n) => {
      expect(bytes.length).toBe(n * 2 * 2);
      frames.push(n);
    });
    for (let at = 0; at < 20 * BLOCK; at += BLOCK) rec.push(samples.map((c) => c.subarray(at, at + BLOCK)), at);
    rec.stop();
    expect(rec.done).toBe(true);
    expect(frames.reduce((a, b) => a + b, 0)).toBe(20 * BLOCK);
  });
});
