import { afterAll, describe, expect, it } from 'vitest';
import wavefile from 'wavefile';
import { analyzeWavBytes } from '../../analysis/analyze';
import { LevelMeter, WAVEFORM_POINTS, ZCR_SEGMENTS } from '../../analysis/levels';
import { generateSine } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { soxDir, soxStats, SOX_RMS_TO_DBFS } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

describe('level, peak, crest factor, DC (AES17 dBFS)', () => {
  it('AES17: a full-scale sine reads 0 dBFS and a full-scale square +3.01 dBFS', () => {
    const fs = 48000;
    const sine = generateSine({ sampleRate: fs, frequencyHz: 1000, levelDbfs: 0, seconds: 1 });
    const square = [Float64Array.from(sine[0]!, (v, n) => (n % 48 < 24 ? 1 : -1))];
    const rs = analyzeWavBytes(encodeWav(sine, fs, 'float32')).channels[0]!;
    const rq = analyzeWavBytes(encodeWav(square, fs, 'float32')).channels[0]!;
    // 1000 Hz at 48 kHz is 48 samples a period, so the sampled RMS is exact: float32 rounding only.
    expect(Math.abs(rs.rmsDbfs!)).toBeLessThan(1e-5);
    expect(Math.abs(rq.rmsDbfs! - 20 * Math.log10(Math.SQRT2))).toBeLessThan(1e-9);
    expect(rq.rmsDbfs!).toBeCloseTo(3.01, 2);
    // A sine's crest factor is √2 (3.01 dB); a square's is 1 (0 dB).
    expect(rs.crestFactorDb!).toBeCloseTo(3.0103, 3);
    expect(rq.crestFactorDb!).toBeCloseTo(0, 9);
  });

  it('tone with DC, made by sox: RMS, peak, DC and crest factor as sox stats reports them', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('dc.wav'), 'synth', '2', 'sine', '1000', 'vol', '0.5', 'dcshift', '0.2');
    const st = soxStats(dir.path('dc.wav'))[0]!;
    const c = analyzeWavBytes(dir.read('dc.wav')).channels[0]!;
    // RMS includes DC, as a true-RMS reading does (sox's does too): √(0.5²/2 + 0.2²).
    expect(Math.abs(c.rmsDbfs! - (st.rmsLevDb + SOX_RMS_TO_DBFS))).toBeLessThanOrEqual(0.006);
    expect(Math.abs(c.peakDbfs! - st.pkLevDb)).toBeLessThanOrEqual(0.006);
    expect(Math.abs(c.dcOffset - st.dcOffset)).toBeLessThanOrEqual(6e-6);
    // sox prints the crest factor ratio to 2 decimals.
    expect(Math.abs(10 ** (c.crestFactorDb! / 20) - st.crestFactor)).toBeLessThanOrEqual(0.006);
  });

  it('pink noise made by sox: RMS and peak as sox stats reports them', () => {
    dir.sox('-n', '-r', '96000', '-b', '24', '-c', '2', dir.path('pink.wav'), 'synth', '1', 'pinknoise', 'vol', '0.3');
    const st = soxStats(dir.path('pink.wav'));
    const r = analyzeWavBytes(dir.read('pink.wav'));
    r.channels.forEach((c, i) => {
      expect(Math.abs(c.rmsDbfs! - (st[i]!.rmsLevDb + SOX_RMS_TO_DBFS))).toBeLessThanOrEqual(0.006);
      expect(Math.abs(c.peakDbfs! - st[i]!.pkLevDb)).toBeLessThanOrEqual(0.006);
    });
  });

  it('clipped samples are counted and reported', () => {
    const [x] = generateSine({ sampleRate: 48000, frequencyHz: 997, levelDbfs: 3, seconds: 0.5 });
    // +3 dBFS clips at full scale where |sin| > 10^(−3/20) ≈ 0.708: about half the samples.
    const bytes = encodeWav([x!], 48000, 16);
    const r = analyzeWavBytes(bytes);
    // Count the full-scale codes with wavefile, an independent reader.
    const codes = new wavefile.WaveFile(bytes).getSamples(false, Float64Array) as unknown as Float64Array;
    const expected = codes.filter((v) => v === 32767 || v === -32768).length;
    expect(expected).toBeGreaterThan(10_000);
    expect(r.channels[0]!.clippedSamples).toBe(expected);
    expect(r.warnings.join(' ')).toMatch(/clipping/);
  });

  it('calibration: volts RMS at full scale and probe attenuation give dBV and dBu (0 dBu = 0.7746 V)', () => {
    const [x] = generateSine({ sampleRate: 48000, frequencyHz: 997, levelDbfs: -20, seconds: 1 });
    const bytes = encodeWav([x!], 48000, 'float32');
    // +4 dBu at full scale (1.2277 V RMS), a −20 dBFS tone: −16 dBu = −18.22 dBV; a 10:1 probe adds 20 dB.
    const c = analyzeWavBytes(bytes, { voltsAtFullScale: 0.774597 * 10 ** (4 / 20), probeAttenuation: 10 }).channels[0]!;
    expect(c.levelDbu!).toBeCloseTo(-16 + 20, 3);
    expect(c.levelDbv!).toBeCloseTo(-16 + 20 - 2.2185, 3);
    expect(c.fundamentalDbu!).toBeCloseTo(4, 3);
    const plain = analyzeWavBytes(bytes).channels[0]!;
    expect(plain.levelDbv).toBeNull();
    expect(plain.noiseDbu).toBeNull();
  });
});

describe('waveform envelope and zero-crossing segments (streaming bookkeeping)', () => {
  // Analytic: point p covers frames [⌊p·T/P⌋, ⌊(p+1)·T/P⌋) and segment s likewise with 32 parts;
  // each must hold exactly the min, max, crossings and mean square of its own frames, whatever
  // the run lengths the samples arrive in. Lengths below 32 leave some segments empty.
  for (const frames of [7, 31, 1000, 4801, 123457]) {
    it(`${frames} frames: every point and segment matches a direct computation`, () => {
      const x = Float64Array.from({ length: frames }, (_, n) => Math.sin(n * 0.37) * 0.5 + ((n * 7919) % 13) / 100 - 0.06);
      const meter = new LevelMeter({ sampleRate: 48000, totalFrames: frames, clipHi: 1, clipLo: -1, countCrossings: true });
      for (let at = 0, k = 0; at < frames; k++) {
        const to = at + Math.min(frames - at, meter.room(), [5, 480, 1, 77][k % 4]!);
        meter.scanRun(x, at, to);
        at = to;
      }
      const r = meter.result();
      const P = Math.min(WAVEFORM_POINTS, frames);
      const compact = (v: number) => Number(v.toPrecision(5));
      for (let p = 0; p < P; p++) {
        const part = x.subarray(Math.floor((p * frames) / P), Math.floor(((p + 1) * frames) / P));
        expect(r.waveform.min[p]).toBe(compact(Math.min(...part)));
        expect(r.waveform.max[p]).toBe(compact(Math.max(...part)));
      }
      let previous = 0;
      for (let s = 0; s < ZCR_SEGMENTS; s++) {
        const from = Math.floor((s * frames) / ZCR_SEGMENTS);
        const part = x.subarray(from, Math.floor(((s + 1) * frames) / ZCR_SEGMENTS));
        let crossings = 0;
        let sq = 0;
        for (const v of part) {
          crossings += (v < 0 ? 1 : 0) ^ (previous < 0 ? 1 : 0);
          previous = v;
          sq += v * v;
        }
        expect(r.segments[s]!.samples).toBe(part.length);
        expect(r.segments[s]!.crossings).toBe(crossings);
        expect(r.segments[s]!.meanSquare).toBeCloseTo(part.length ? sq / part.length : 0, 12);
      }
    });
  }
});
