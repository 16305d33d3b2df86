import { describe, expect, it } from 'vitest';
import { encodeWav, generateSine } from '../../analysis/index';
import { SampleHistory } from '../../analysis/sample-history';
import { FrameDecoder } from '../../analysis/wav-decode';
import { parseWavHeader } from '../../analysis/wav-header';

// The per-channel ring every part of the pass looks back into: what goes in at absolute frame f
// comes out at f, across the ring's wrap, for as far back as was asked for.

describe('sample history', () => {
  it('gives back frames written in pieces across the wrap, exactly', () => {
    const h = new SampleHistory(100, 64);
    expect(h.ring.length).toBe(256);
    const x = Float64Array.from({ length: 1000 }, (_, i) => i * 0.5 - 7);
    for (let at = 0; at < x.length; at += 37) {
      const n = Math.min(37, x.length - at);
      h.write(at, x.subarray(at, at + n), n);
      // The last 100 frames before the newest are all readable, wrap or not.
      const from = Math.max(0, at + n - 100);
      const out = new Float64Array(at + n - from);
      h.copy(from, at + n, out, 0);
      expect(Array.from(out)).toEqual(Array.from(x.subarray(from, at + n)));
    }
  });

  it('is where the decoder writes its blocks: the same samples as blocks of its own', () => {
    const fs = 48_000;
    const bytes = encodeWav(generateSine({ sampleRate: fs, frequencyHz: 997, levelDbfs: -6, seconds: 1.3, channels: 2, drivenChannels: [0] }), fs, 24);
    const info = parseWavHeader(bytes)!;
    const data = bytes.subarray(info.dataOffset);
    const collect = (histories?: SampleHistory[]) => {
      const got = [new Float64Array(info.frames), new Float64Array(info.frames)];
      const d = new FrameDecoder(info, (block, start, length) => block.forEach((b, c) => got[c]!.set(b.subarray(0, length), start)), 4096, [0, 1], histories);
      // Odd-sized pieces, so frames straddle them.
      for (let at = 0; at < data.length; at += 10_001) d.push(data.subarray(at, at + 10_001));
      d.finish();
      return got;
    };
    const plain = collect();
    const ringed = collect([new SampleHistory(5000, 4096), new SampleHistory(5000, 4096)]);
    expect(ringed.map((c) => Array.from(c))).toEqual(plain.map((c) => Array.from(c)));
    // The sine itself (generate.ts), read back to within the 24-bit step.
    expect(Math.max(...plain[0]!.map(Math.abs))).toBeCloseTo(10 ** (-6 / 20), 5);
  });

  it('refuses a block size that does not divide the ring', () => {
    expect(() => new SampleHistory(100, 96)).toThrow(/does not divide/);
  });
});
