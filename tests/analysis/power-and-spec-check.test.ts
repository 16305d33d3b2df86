import { describe, expect, it } from 'vitest';
import { DBU_REFERENCE_V, dbvFromVolts, powerFromDbv, voltsForWatts, voltsFromDbu, voltsFromDbv, wattsFromVolts } from '../../shared/power';
import { checkFiguresAgainstSpec, readingFor, type PublishedFigure } from '../../shared/spec-check';
import { dbvAtFullScale } from '../../shared/calibrations';
import { figures } from './measurement-figures';

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
    expect(rows[3]!.note).toBe('not measured from a single capture');
  });

  it('a reading across 4 Ω does not answer an 8 Ω power figure; a noise-limited separation says so', () => {
    expect(readingFor('power_8ohm_w', figures({ loadOhms: 4, powerW: 60 }))).toEqual({ value: null, note: 'needs a capture across an 8 Ω dummy load' });
    expect(readingFor('power_8ohm_w', figures({ loadOhms: 8.2, powerW: null })).note).toMatch(/calibration/);
    expect(readingFor('separation_1k_db', figures({ separationDb: 90, separationNoiseLimited: true })).note).toMatch(/at least this/);
    expect(readingFor('separation_1k_db', figures({ fundamentalHz: 3000 })).note).toBe('measured at 3000 Hz, not 1 kHz');
  });

  it('THD+N in dB becomes % for the sheet: −80 dB is 0.01 %', () => {
    expect(readingFor('thdn_pct', figures({ thdnDb: -80 })).value).toBeCloseTo(0.01, 9);
  });
});
