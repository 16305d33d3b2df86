import { writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateLogSweep } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { soxDir } from './helpers';

// Source for the filters: sox(1), "highpass/lowpass [-1|-2] frequency [width]": two poles by
// default with Q = 0.707, i.e. Butterworth, which is 3.01 dB down at its corner frequency.

const dir = soxDir();
afterAll(() => dir.remove());

describe('frequency response from a log sweep', () => {
  it('our sweep through sox’s high-pass 50 Hz and low-pass 5 kHz: −3 dB points at 50 Hz and 5 kHz', () => {
    const sweep = generateLogSweep({ sampleRate: 48000, startHz: 10, endHz: 20000, seconds: 10, levelDbfs: -6 });
    writeFileSync(dir.path('sweep.wav'), encodeWav(sweep, 48000, 24));
    dir.sox(dir.path('sweep.wav'), '-b', '24', dir.path('filtered.wav'), 'highpass', '50', 'lowpass', '5000');
    const r = analyzeWavBytes(dir.read('filtered.wav'));
    // Recognised without being told (rising zero-crossing rate).
    expect(r.stimulus).toBe('sweep');
    const s = r.sweep!.channels[0]!;
    // 1/24-octave bands (2.9 % apart) interpolated in log frequency: within 1 %.
    expect(Math.abs(s.lowMinus3dbHz! / 50 - 1)).toBeLessThan(0.01);
    expect(Math.abs(s.highMinus3dbHz! / 5000 - 1)).toBeLessThan(0.01);
    expect(r.sweep!.referenceHz).toBeGreaterThan(970);
    expect(r.sweep!.referenceHz).toBeLessThan(1030);
    expect(s.frequencyHz.length).toBeLessThanOrEqual(400);
    // Tone figures do not apply to a sweep.
    expect(r.channels[0]!.thdPct).toBeNull();
  });

  it('sox’s own exponential sweep (synth 10/22000) reads flat within ±0.2 dB from 40 Hz to 12 kHz', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('soxsweep.wav'), 'synth', '8', 'sine', '10/22000', 'vol', '0.5');
    const r = analyzeWavBytes(dir.read('soxsweep.wav'), { stimulus: 'sweep' });
    const s = r.sweep!.channels[0]!;
    const inBand = s.responseDb.filter((_, i) => s.frequencyHz[i]! >= 40 && s.frequencyHz[i]! <= 12000);
    expect(inBand.length).toBeGreaterThan(190); // 8.2 octaves × 24 bands
    // sox starts and stops its sweep without a fade; its ripple stays near the ends, outside this range.
    expect(Math.max(...inBand.map(Math.abs))).toBeLessThan(0.2);
    expect(s.lowMinus3dbHz).toBeNull();
    expect(s.highMinus3dbHz).toBeNull();
  });

  it('a steady tone is not taken for a sweep', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('tone.wav'), 'synth', '5', 'sine', '997', 'vol', '0.5');
    expect(analyzeWavBytes(dir.read('tone.wav')).stimulus).toBe('tone');
  });
});
