import { writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { DBU_REFERENCE_V, dbvFromVolts, powerFromDbv, voltsForWatts, voltsFromDbu, voltsFromDbv, wattsFromVolts } from '../../shared/power';
import { checkFiguresAgainstSpec, readingFor, type PublishedFigure } from '../../shared/spec-check';
import { dbvAtFullScale } from '../../shared/calibrations';
import { figures } from './measurement-figures';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateLogSweep } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { figuresFromResult, type SweepFigures } from '../../shared/capture-figures';
import { soxDir } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

describe('P = V²/R (REFERENCES.md analytic truths)', () => {
  it.each([
    [45, 8, 18.974],
    [60, 4, 15.492],
    [1, 8, 2.828],
  ])('%i W into %i Ω is %f V RMS', (watts, ohms, volts) => {
    expect(voltsForWatts(watts, ohms)).toBeCloseTo(volts, 3);
    expect(wattsFromVolts(volts, ohms)).toBeCloseTo(watts, 2);
    expect(powerFromDbv(dbvFromVolts(volts), ohms)).toBeCloseTo(watts, 2);
  });

  it('0 dBu = √0.6 = 0.774597 V RMS, 0 dBV = 1 V; dBu = dBV + 2.2185 dB', () => {
    expect(DBU_REFERENCE_V).toBeCloseTo(0.774597, 6);
    expect(voltsFromDbu(0)).toBeCloseTo(0.774597, 6);
    expect(voltsFromDbv(0)).toBe(1);
    expect(dbvFromVolts(voltsFromDbu(4)) + 2.2185).toBeCloseTo(4, 4);
  });

  it('refuses a load that is not a positive resistance, and gives no power without level or load', () => {
    expect(() => wattsFromVolts(10, 0)).toThrow(/positive resistance/);
    expect(() => voltsForWatts(-1, 8)).toThrow(/not be negative/);
    expect(powerFromDbv(null, 8)).toBeNull();
    expect(powerFromDbv(20, null)).toBeNull();
  });

  it('a calibration of 2 V at 0 dBFS through a 10:1 probe puts 0 dBFS at 26.02 dBV', () => {
    expect(dbvAtFullScale(2, 10)).toBeCloseTo(20 * Math.log10(20), 9);
  });
});

describe('spec check of a capture', () => {
  const published: PublishedFigure[] = [
    { metric: 'separation_1k_db', value: 60, condition: 'line input, 1 kHz', source: 'demo sheet' },
    { metric: 'thd_pct', value: 0.05, condition: '1 kHz', source: 'demo sheet' },
    { metric: 'power_8ohm_w', value: 45, condition: 'per channel', source: 'demo sheet' },
    { metric: 'snr_line_db', value: 98, condition: 'A-weighted', source: 'demo sheet' },
  ];

  it('judges separation and THD with the shared rule, and power only across the stated load', () => {
    const after = figures({ separationDb: 70, thdPct: 0.004, loadOhms: 8, powerW: 45.2 });
    const rows = checkFiguresAgainstSpec(after, published);
    expect(rows.map((r) => [r.metric, r.within])).toEqual([
      ['separation_1k_db', true],
      ['thd_pct', true],
      ['power_8ohm_w', true],
      ['snr_line_db', null],
    ]);
    expect(rows[0]).toMatchObject({ margin: 10, marginUnit: 'dB', publishedText: '60 dB' });
    // 0.004 % against 0.05 %: 20·lg(0.05 / 0.004) = 21.94 dB better.
    expect(rows[1]!.margin).toBeCloseTo(21.94, 2);
    expect(rows[3]!.note).toBe('needs a capture of the output with no signal (input terminated)');
  });

  it('a reading across 4 Ω does not answer an 8 Ω power figure; a noise-limited separation says so', () => {
    expect(readingFor('power_8ohm_w', figures({ loadOhms: 4, powerW: 60 }))).toEqual({ value: null, note: 'needs a capture across an 8 Ω dummy load' });
    expect(readingFor('power_8ohm_w', figures({ loadOhms: 8.2, powerW: null })).note).toMatch(/calibration/);
    expect(readingFor('separation_1k_db', figures({ separationDb: 90, separationNoiseLimited: true })).note).toMatch(/at least this/);
    expect(readingFor('separation_1k_db', figures({ fundamentalHz: 3000 })).note).toBe('measured at 3000 Hz, not 1 kHz');
  });

  it('rated power is a steady tone’s: residual noise across the load answers no power figure', () => {
    expect(readingFor('power_8ohm_w', figures({ stimulus: 'silence', drivenChannel: null, loadOhms: 8, powerW: 1e-9 }))).toEqual({
      value: null,
      note: 'needs a test-tone capture at rated output',
    });
    const quiet = new Float64Array(48000).map((_, n) => 1e-4 * Math.sin(n * 1.3) * Math.cos(n * 0.017));
    const result = analyzeWavBytes(encodeWav([quiet], 48000, 24), { stimulus: 'silence', voltsAtFullScale: 1.55, probeAttenuation: 10 });
    expect(figuresFromResult(result, { loadOhms: 8 }).powerW).toBeNull();
  });

  it('THD+N in dB becomes % for the sheet: −80 dB is 0.01 %', () => {
    expect(readingFor('thdn_pct', figures({ thdnDb: -80 })).value).toBeCloseTo(0.01, 9);
  });
});

const sheet = (...rows: [PublishedFigure['metric'], number][]): PublishedFigure[] =>
  rows.map(([metric, value]) => ({ metric, value, condition: '', source: 'test sheet' }));

describe('SNR against the rated output (P = V²/R; referring SNR to rated output is trade practice)', () => {
  const quiet = figures({ stimulus: 'silence', drivenChannel: null, noiseDbvA: -70 });

  it('50 W into 8 Ω is 20 V = 26.02 dBV: with noise at −70 dBV(A) the SNR is 96.02 dB', () => {
    const r = readingFor('snr_line_db', quiet, sheet(['power_8ohm_w', 50], ['snr_line_db', 95]));
    expect(r.value).toBeCloseTo(20 * Math.log10(20) + 70, 9);
    expect(r.note).toMatch(/50 W into 8 Ω/);
    const [row] = checkFiguresAgainstSpec(quiet, sheet(['snr_line_db', 95]), sheet(['power_8ohm_w', 50], ['snr_line_db', 95]));
    expect(row).toMatchObject({ within: true, marginUnit: 'dB' });
    expect(row!.margin).toBeCloseTo(1.0206, 3);
  });

  it('falls back to the 4 Ω rating, then to the maximum output level', () => {
    expect(readingFor('snr_phono_db', quiet, sheet(['power_4ohm_w', 25])).value).toBeCloseTo(20 * Math.log10(10) + 70, 9);
    expect(readingFor('snr_line_db', quiet, sheet(['max_output_v', 2])).value).toBeCloseTo(20 * Math.log10(2) + 70, 9);
  });

  it('needs a no-signal capture, a calibration and a rated output', () => {
    expect(readingFor('snr_line_db', figures({ noiseDbvA: -70 }), sheet(['power_8ohm_w', 50])).value).toBeNull();
    expect(readingFor('snr_line_db', figures({ stimulus: 'silence', noiseDbvA: null }), sheet(['power_8ohm_w', 50])).note).toMatch(/calibration/);
    expect(readingFor('snr_line_db', quiet, []).note).toMatch(/rated power or maximum output level/);
  });
});

describe('frequency response against the sheet (analytic first-order roll-offs)', () => {
  // |H|² of a first-order high-pass at 30 Hz and low-pass at 25 kHz, on the engine's grid (24 bands
  // per octave from 22.4 Hz to 17.8 kHz), relative to 1 kHz: the exact curve a sweep would give.
  const lvl = (f: number) => -10 * Math.log10(1 + (30 / f) ** 2) - 10 * Math.log10(1 + (f / 25_000) ** 2);
  const grid = Array.from({ length: 240 }, (_, i) => 22.45 * 2 ** (i / 24)).filter((f) => f <= 17_820);
  const response: SweepFigures = {
    startHz: 20,
    endHz: 20_000,
    referenceHz: 1000,
    channels: [{ channel: 0, frequencyHz: grid, responseDb: grid.map((f) => lvl(f) - lvl(1000)) }],
  };
  const swept = figures({ stimulus: 'sweep', response });
  /** Where the analytic curve is `db` below its 1 kHz level, by bisection in log frequency. */
  const solve = (db: number, lo: number, hi: number) => {
    for (let k = 0; k < 100; k++) {
      const mid = Math.sqrt(lo * hi);
      if (lvl(mid) - lvl(1000) < -db) lo = mid;
      else hi = mid;
    }
    return Math.sqrt(lo * hi);
  };

  it('without a published tolerance the low end is the −3 dB point (30.0 Hz for a 30 Hz first-order corner)', () => {
    const r = readingFor('response_low_hz', swept, sheet(['response_low_hz', 20]));
    // 1/24-octave points interpolated in log frequency: within 0.5 %.
    expect(Math.abs(r.value! / solve(3, 10, 1000) - 1)).toBeLessThan(0.005);
    expect(r.note).toMatch(/−3 dB point/);
  });

  it('with ±1 dB published the low end is where the curve leaves ±1 dB', () => {
    const r = readingFor('response_low_hz', swept, sheet(['response_low_hz', 20], ['response_tolerance_db', 1]));
    expect(Math.abs(r.value! / solve(1, 10, 1000) - 1)).toBeLessThan(0.005);
  });

  it('a curve still inside the band where the sweep ends answers only if it reached the published edge', () => {
    // At 17.8 kHz the 25 kHz corner is 1.8 dB down: inside ±3 dB.
    expect(readingFor('response_high_hz', swept, sheet(['response_high_hz', 20_000])).value).toBeNull();
    expect(readingFor('response_high_hz', swept, sheet(['response_high_hz', 20_000])).note).toMatch(/sweep higher/);
    const judged = readingFor('response_high_hz', swept, sheet(['response_high_hz', 15_000]));
    expect(judged.value).toBe(grid[grid.length - 1]);
    expect(judged.note).toMatch(/at least this wide/);
  });

  it('the ± tolerance reading is the largest deviation inside the published band', () => {
    const r = readingFor('response_tolerance_db', swept, sheet(['response_low_hz', 40], ['response_high_hz', 15_000], ['response_tolerance_db', 1]));
    // The deepest point is the first grid point at or above 40 Hz (within 1/24 octave of it).
    const first = grid.find((f) => f >= 40)!;
    expect(r.value).toBeCloseTo(-(lvl(first) - lvl(1000)), 9);
    expect(r.value).toBeGreaterThan(-(lvl(40 * 2 ** (1 / 24)) - lvl(1000)));
  });

  it('a capture without a sweep says what it needs', () => {
    expect(readingFor('response_low_hz', figures(), []).note).toBe('needs a log-sweep capture');
  });
});

describe('frequency response of a sweep through sox’s Butterworth filters, against a sheet', () => {
  // sox(1): highpass/lowpass default to two poles, Q = 0.707 (Butterworth): |H|² = 1/(1 + (fc/f)⁴)
  // for the high-pass, so it is 1 dB down where (fc/f)⁴ = 10^0.1 − 1, i.e. at fc / 0.7133.
  it('high-pass 50 Hz, low-pass 5 kHz: ±1 dB ends at 70.1 Hz and 3.57 kHz, short of a 40 Hz – 6 kHz sheet', () => {
    const sweep = generateLogSweep({ sampleRate: 48000, startHz: 10, endHz: 20000, seconds: 10, levelDbfs: -6 });
    writeFileSync(dir.path('sweep.wav'), encodeWav(sweep, 48000, 24));
    dir.sox(dir.path('sweep.wav'), '-b', '24', dir.path('filtered.wav'), 'highpass', '50', 'lowpass', '5000');
    const result = analyzeWavBytes(dir.read('filtered.wav'), { sweepStartHz: 10, sweepEndHz: 20000 });
    const f = figuresFromResult(result, { loadOhms: null });
    const published = sheet(['response_low_hz', 40], ['response_high_hz', 6000], ['response_tolerance_db', 1]);
    const rows = checkFiguresAgainstSpec(f, published);
    const k = (10 ** 0.1 - 1) ** 0.25;
    expect(Math.abs(rows[0]!.measured! / (50 / k) - 1)).toBeLessThan(0.02);
    expect(Math.abs(rows[1]!.measured! / (5000 * k) - 1)).toBeLessThan(0.02);
    expect(rows.slice(0, 2).map((r) => r.within)).toEqual([false, false]);
    // Inside 40 Hz – 6 kHz the deepest point is near 40 Hz: 10·lg(1 + (50/40)⁴) = 5.37 dB.
    expect(rows[2]!.within).toBe(false);
    expect(rows[2]!.measured!).toBeGreaterThan(4.8);
    expect(rows[2]!.measured!).toBeLessThan(5.5);
  });
});
