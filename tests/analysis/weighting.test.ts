import { describe, expect, it } from 'vitest';
import { DBU_REFERENCE_VOLTS, dbfsToDbv, dbvToDbu, voltsForWatts, wattsIntoLoad } from '../../analysis/units';
import { aWeightingDb } from '../../analysis/weighting';

// IEC 61672-1:2013 Table 3, A-weighting, nominal 10 Hz … 20 kHz one-third-octave, tabulated at
// the exact frequencies 1000·10^(n/10) Hz, n = −20 … 13 (values from REFERENCES.md). The table is
// rounded to 0.1 dB; the Annex E formula matches it within 0.06 dB at the exact frequencies.
const TABLE_A = [
  -70.4, -63.4, -56.7, -50.5, -44.7, -39.4, -34.6, -30.2, -26.2, -22.5, -19.1, -16.1, -13.4, -10.9, -8.6, -6.6, -4.8, -3.2,
  -1.9, -0.8, 0.0, 0.6, 1.0, 1.2, 1.3, 1.2, 1.0, 0.5, -0.1, -1.1, -2.5, -4.3, -6.6, -9.3,
];

describe('A-weighting (IEC 61672-1:2013)', () => {
  it('matches Table 3 at all 34 exact frequencies within 0.06 dB', () => {
    expect(TABLE_A).toHaveLength(34);
    TABLE_A.forEach((expected, i) => {
      const f = 1000 * 10 ** ((i - 20) / 10);
      expect(Math.abs(aWeightingDb(f) - expected), `${f.toFixed(1)} Hz`).toBeLessThanOrEqual(0.06);
    });
  });

  it('is 0 dB at 1 kHz (A1000 normalisation of Annex E)', () => {
    expect(Math.abs(aWeightingDb(1000))).toBeLessThan(0.001);
  });
});

describe('voltage and power units', () => {
  it('0 dBu = √0.6 V = 0.774597 V RMS; dBu = dBV + 2.2185 dB (REFERENCES.md, analytic)', () => {
    expect(DBU_REFERENCE_VOLTS).toBeCloseTo(0.774597, 6);
    expect(dbvToDbu(0)!).toBeCloseTo(2.2185, 4);
  });

  it('calibration: 0 dBFS with 1.2277 V at full scale reads +4 dBu (0.7746 V · 10^(4/20) = 1.2277 V)', () => {
    const dbv = dbfsToDbv(0, { voltsAtFullScale: 0.774597 * 10 ** (4 / 20), probeAttenuation: 1 });
    // 0.774597 is rounded to 6 digits (4·10⁻⁷ relative): 10⁻⁴ dB is ample.
    expect(dbvToDbu(dbv)!).toBeCloseTo(4, 4);
    // A 10:1 probe adds 20 dB.
    expect(dbfsToDbv(-20, { voltsAtFullScale: 1, probeAttenuation: 10 })!).toBeCloseTo(0, 9);
  });

  it('P = V²/R: 45 W into 8 Ω = 18.974 V, 60 W into 4 Ω = 15.492 V, 1 W into 8 Ω = 2.828 V', () => {
    expect(voltsForWatts(45, 8)).toBeCloseTo(18.974, 3);
    expect(voltsForWatts(60, 4)).toBeCloseTo(15.492, 3);
    expect(voltsForWatts(1, 8)).toBeCloseTo(2.828, 3);
    expect(wattsIntoLoad(18.974, 8)).toBeCloseTo(45, 2);
  });
});
