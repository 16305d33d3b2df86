/**
 * The stimulus files of the Test signals page (shared/signals.ts) and the live calibration
 * formula (shared/recordings.ts). References outside the project:
 * - AES17-2015: dBFS = 20·log10(RMS·√2), so a −20 dBFS sine has RMS 0.1/√2 and sox's RMS level
 *   (20·log10 RMS) reads −23.01 dB (see helpers.ts SOX_RMS_TO_DBFS);
 * - sox `stats` as an independent reader and meter of the written files;
 * - the calibration's analytic values: 20·log10(0.5) = −6.0206 dB, so a card that reads a 1 V
 *   reference at −6.0206 dBFS has 2 V RMS at full scale.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import fc from 'fast-check';
import { analyzeWavBytes } from '../../analysis/index';
import { dbvAtFullScale } from '../../shared/calibrations';
import { liveCalibrationSchema, voltsAtFullScaleFrom } from '../../shared/recordings';
import {
  loopsCleanly,
  renderSignal,
  renderSignalWav,
  signalFileName,
  signalRequestSchema,
  type SignalRequestInput,
} from '../../shared/signals';
import { SOX_RMS_TO_DBFS, soxDir, soxStats } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

const req = (input: SignalRequestInput) => signalRequestSchema.parse(input);
function soxOf(name: string, bytes: Uint8Array) {
  const path = dir.path(name);
  writeFileSync(path, bytes);
  return soxStats(path);
}

describe('test signal files', () => {
  it('defaults to the AES17 tone: 997 Hz at −20 dBFS on both channels', () => {
    expect(req({})).toMatchObject({ kind: 'sine', frequencyHz: 997, levelDbfs: -20, channels: 'both' });
  });

  for (const format of ['16', '24', 'float32'] as const) {
    it(`a −20 dBFS 997 Hz sine in ${format} reads −20.00 ± 0.01 dBFS in the engine and −23.01 dB RMS in sox`, () => {
      const s = req({ format, seconds: 2, sampleRate: 48_000 });
      const bytes = renderSignalWav(s);
      const result = analyzeWavBytes(bytes);
      for (const ch of result.channels) {
        expect(Math.abs(ch.rmsDbfs! - -20)).toBeLessThan(0.01);
        expect(Math.abs(ch.fundamentalDbfs! - -20)).toBeLessThan(0.01);
        expect(Math.abs(ch.fundamentalHz! - 997)).toBeLessThan(0.05);
      }
      // sox prints two decimals: −23.0103 shows as −23.01.
      for (const st of soxOf(`sine-${format}.wav`, bytes)) expect(st.rmsLevDb).toBeCloseTo(-20 - SOX_RMS_TO_DBFS, 2);
    });
  }

  it('left-only and right-only leave the other channel digitally silent (float, no dither)', () => {
    for (const [channels, driven, idle] of [['left', 0, 1], ['right', 1, 0]] as const) {
      const s = req({ channels, format: 'float32', seconds: 1, levelDbfs: -6 });
      const samples = renderSignal(s);
      expect(samples[idle]!.every((v) => v === 0)).toBe(true);
      const result = analyzeWavBytes(renderSignalWav(s));
      expect(result.drivenChannel).toBe(driven);
      expect(result.channels[driven]!.rmsDbfs!).toBeCloseTo(-6, 2);
      expect(result.channels[idle]!.rmsDbfs).toBeNull();
    }
  });

  it('silence is all zeros; sox agrees there is no signal', () => {
    const s = req({ kind: 'silence', format: '16', dither: 'none', seconds: 1 });
    const samples = renderSignal(s);
    expect(samples.every((c) => c.every((v) => v === 0))).toBe(true);
    const stats = soxOf('silence.wav', renderSignalWav(s));
    expect(stats.every((st) => st.rmsLevDb === -Infinity || Number.isNaN(st.rmsLevDb) || st.rmsLevDb < -140)).toBe(true);
  });

  it('a log sweep is recognised as a sweep and reads flat from 100 Hz to 10 kHz', () => {
    const s = req({ kind: 'sweep', startHz: 20, endHz: 20_000, levelDbfs: -10, seconds: 4, format: 'float32', channels: 'left' });
    const result = analyzeWavBytes(renderSignalWav(s), { stimulus: 'sweep', sweepStartHz: 20, sweepEndHz: 20_000 });
    const response = result.sweep!.channels.find((c) => c.channel === 0)!;
    const inBand = response.responseDb.filter((_, i) => response.frequencyHz[i]! >= 100 && response.frequencyHz[i]! <= 10_000);
    expect(inBand.length).toBeGreaterThan(10);
    expect(Math.max(...inBand.map(Math.abs))).toBeLessThan(0.5);
  });

  it('whole seconds of a whole-hertz tone loop without a step; a fractional cycle does not', () => {
    expect(loopsCleanly(req({ seconds: 10 }))).toBe(true);
    expect(loopsCleanly(req({ seconds: 0.5 }))).toBe(false); // 498.5 cycles
    const s = req({ seconds: 1, format: 'float32', sampleRate: 44_100 });
    const x = renderSignal(s)[0]!;
    // The sample after the last is the first again: the step across the seam is an ordinary step.
    const w = (2 * Math.PI * 997) / 44_100;
    expect(Math.abs(x[0]! - x[x.length - 1]! - 0.1 * (Math.sin(0) - Math.sin(-w)))).toBeLessThan(1e-9);
  });

  it('refuses impossible files with the field named', () => {
    const bad = (input: SignalRequestInput) => signalRequestSchema.safeParse(input);
    expect(bad({ frequencyHz: 24_000, sampleRate: 48_000 }).error?.issues[0]?.path).toEqual(['frequencyHz']);
    expect(bad({ kind: 'sweep', startHz: 1000, endHz: 500 }).error?.issues[0]?.path).toEqual(['endHz']);
    expect(bad({ levelDbfs: 1 }).success).toBe(false);
    expect(bad({ seconds: 120, sampleRate: 192_000, format: 'float32' }).error?.issues[0]?.path).toEqual(['seconds']);
  });

  it('names the file after what is in it', () => {
    expect(signalFileName(req({ channels: 'right', sampleRate: 44_100, format: '16', seconds: 5 }))).toBe('sine-997Hz-minus20dBFS-right-44.1k-16bit-5s.wav');
    expect(signalFileName(req({ kind: 'sweep', levelDbfs: -10.5 }))).toBe('sweep-20-20000Hz-minus10p5dBFS-both-48k-24bit-10s.wav');
  });
});

describe('calibration from a live reading', () => {
  it('matches analytic values', () => {
    // 1 V read at 20·log10(0.5) dBFS → full scale is 2 V.
    expect(voltsAtFullScaleFrom({ referenceVoltsRms: 1, probeAttenuation: 1, measuredDbfs: 20 * Math.log10(0.5) })).toBeCloseTo(2, 12);
    // 10 V through a 10:1 probe is 1 V at the card; read at −20 dBFS → full scale 10 V at the card.
    expect(voltsAtFullScaleFrom({ referenceVoltsRms: 10, probeAttenuation: 10, measuredDbfs: -20 })).toBeCloseTo(10, 12);
    // 0 dBu = √0.6 V read at 0 dBFS → full scale 0.774597 V.
    expect(voltsAtFullScaleFrom({ referenceVoltsRms: Math.sqrt(0.6), probeAttenuation: 1, measuredDbfs: 0 })).toBeCloseTo(0.774597, 6);
  });

  it('the profile reads the reference back as its own voltage, for any reading and probe', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.001, max: 100, noNaN: true }),
        fc.double({ min: 1, max: 100, noNaN: true }),
        fc.double({ min: -100, max: 3, noNaN: true }),
        (referenceVoltsRms, probeAttenuation, measuredDbfs) => {
          const vfs = voltsAtFullScaleFrom({ referenceVoltsRms, probeAttenuation, measuredDbfs });
          // dBV at the probe tip = reading + dBV of full scale (analysis/units.ts dbfsToDbv).
          const dbv = measuredDbfs + dbvAtFullScale(vfs, probeAttenuation);
          expect(dbv).toBeCloseTo(20 * Math.log10(referenceVoltsRms), 9);
        },
      ),
    );
  });

  it('refuses readings that cannot be a reference', () => {
    expect(liveCalibrationSchema.safeParse({ referenceVoltsRms: 1, probeAttenuation: 1, measuredDbfs: -140 }).success).toBe(false);
    expect(liveCalibrationSchema.safeParse({ referenceVoltsRms: 0, probeAttenuation: 1, measuredDbfs: -6 }).success).toBe(false);
  });
});
