import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateNoise, generateSine, mixInto } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { soxDir, soxStats, SOX_RMS_TO_DBFS } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

const sine = (hz: number, dbfs: number, seconds = 3): Float64Array =>
  generateSine({ sampleRate: 48000, frequencyHz: hz, levelDbfs: dbfs, seconds })[0]!;

describe('hum (mains and its harmonics)', () => {
  it('60 Hz hum made by sox: mains detected as 60 Hz, level as sox stats reads it', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('hum60.wav'), 'synth', '3', 'sine', '60', 'vol', '0.001');
    const st = soxStats(dir.path('hum60.wav'))[0]!;
    const r = analyzeWavBytes(dir.read('hum60.wav'));
    expect(r.stimulus).toBe('silence');
    expect(r).toMatchObject({ mainsHz: 60, mainsSource: 'detected' });
    const c = r.channels[0]!;
    expect(c.hum.detected).toBe(true);
    // The whole capture is the hum: its lobe holds the capture's RMS (sox: 2-decimal print).
    expect(Math.abs(c.humDbfs! - (st.rmsLevDb + SOX_RMS_TO_DBFS))).toBeLessThanOrEqual(0.01);
    expect(c.hum.harmonics[0]!.frequencyHz).toBe(60);
    expect(c.hum.harmonics[0]!.levelDbfs!).toBeCloseTo(-60, 1);
  });

  it('50 Hz family −70/−76/−80 dBFS: total 10·lg(10^−7 + 10^−7.6 + 10^−8) = −68.69 dBFS (computed)', () => {
    const x = mixInto(mixInto(mixInto(sine(50, -70), sine(100, -76)), sine(150, -80)), generateNoise({ sampleRate: 48000, levelDbfs: -120, seconds: 3, seed: 2 })[0]!);
    const r = analyzeWavBytes(encodeWav([x], 48000, 24));
    expect(r).toMatchObject({ mainsHz: 50, mainsSource: 'detected', stimulus: 'silence' });
    const c = r.channels[0]!;
    expect(c.humDbfs!).toBeCloseTo(10 * Math.log10(1e-7 + 10 ** -7.6 + 1e-8), 2);
    expect(c.hum.harmonics.slice(0, 3).map((h) => Math.round(h.levelDbfs!))).toEqual([-70, -76, -80]);
    // Harmonics 4–6 are only noise: far below the hum and not counted as standing out.
    expect(c.hum.harmonics[3]!.aboveNoiseDb!).toBeLessThan(6);
  });

  it('hum under a test tone is measured apart from the tone; a given mains frequency is used as given', () => {
    const x = mixInto(mixInto(sine(997, -10), sine(50, -90)), generateNoise({ sampleRate: 48000, levelDbfs: -125, seconds: 3, seed: 3 })[0]!);
    const bytes = encodeWav([x], 48000, 24);
    const r = analyzeWavBytes(bytes);
    expect(r.stimulus).toBe('tone');
    expect(r.mainsHz).toBe(50);
    expect(r.channels[0]!.hum.harmonics[0]!.levelDbfs!).toBeCloseTo(-90, 1);
    const given = analyzeWavBytes(bytes, { mainsHz: 60 });
    expect(given).toMatchObject({ mainsHz: 60, mainsSource: 'given' });
    expect(given.channels[0]!.hum.detected).toBe(false);
    expect(given.channels[0]!.hum.harmonics[0]!.levelDbfs!).toBeLessThan(-120);
  });

  it('no hum and no tone: mains falls back to the 50 Hz default', () => {
    const r = analyzeWavBytes(encodeWav(generateNoise({ sampleRate: 48000, levelDbfs: -100, seconds: 2, seed: 1 }), 48000, 24));
    expect(r).toMatchObject({ mainsHz: 50, mainsSource: 'default' });
    expect(r.channels[0]!.hum.detected).toBe(false);
  });
});
