import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { SPEC_METRICS, SPEC_METRIC_INFO, checkAgainstSpec, formatSpecValue, type SpecMetric } from '../../shared/specs';

const fig = (metric: SpecMetric, value: number) => ({ metric, value });

describe('checkAgainstSpec: known answers', () => {
  it('THD is lower-is-better; twice the published THD is 6.02 dB short (20·lg 2)', () => {
    const worse = checkAgainstSpec('thd_pct', 0.1, fig('thd_pct', 0.05));
    expect(worse.within).toBe(false);
    expect(worse.direction).toBe('lower_is_better');
    expect(worse.marginUnit).toBe('dB');
    expect(worse.margin).toBeCloseTo(-20 * Math.log10(2), 9);
    expect(worse.margin).toBeCloseTo(-6.0206, 4);
    expect(checkAgainstSpec('thd_pct', 0.025, fig('thd_pct', 0.05))).toMatchObject({ within: true });
  });

  it('power is higher-is-better in power dB; half the power is 3.01 dB short', () => {
    const half = checkAgainstSpec('power_8ohm_w', 35, fig('power_8ohm_w', 70));
    expect(half.within).toBe(false);
    expect(half.margin).toBeCloseTo(-3.0103, 4);
  });

  it('18.974 V RMS across 8 Ω meets a 45 W rating (P = V²/R, REFERENCES.md)', () => {
    const watts = 18.974 ** 2 / 8;
    const res = checkAgainstSpec('power_8ohm_w', watts, fig('power_8ohm_w', 45));
    expect(res.within).toBe(true);
    expect(Math.abs(res.margin)).toBeLessThan(0.001);
  });

  it('SNR and separation are higher-is-better in plain dB', () => {
    expect(checkAgainstSpec('snr_line_db', 97.5, fig('snr_line_db', 98))).toEqual({ within: false, margin: -0.5, marginUnit: 'dB', direction: 'higher_is_better' });
    expect(checkAgainstSpec('snr_line_db', 98, fig('snr_line_db', 98))).toEqual({ within: true, margin: 0, marginUnit: 'dB', direction: 'higher_is_better' });
    // 40 dB is the historic DIN 45500 minimum; against a published 60 dB it is 20 dB short.
    expect(checkAgainstSpec('separation_1k_db', 40, fig('separation_1k_db', 60))).toMatchObject({ within: false, margin: -20 });
  });

  it('frequency response edges are judged in octaves', () => {
    expect(checkAgainstSpec('response_high_hz', 25_000, fig('response_high_hz', 50_000))).toEqual({
      within: false,
      margin: -1,
      marginUnit: 'octaves',
      direction: 'higher_is_better',
    });
    expect(checkAgainstSpec('response_low_hz', 20, fig('response_low_hz', 10))).toMatchObject({ within: false, margin: -1 });
    expect(checkAgainstSpec('response_low_hz', 5, fig('response_low_hz', 10))).toMatchObject({ within: true, margin: 1 });
    expect(checkAgainstSpec('response_tolerance_db', 0.5, fig('response_tolerance_db', 1))).toMatchObject({ within: true, margin: 0.5 });
  });

  it('counts a reading equal to the figure as within despite binary rounding', () => {
    expect(checkAgainstSpec('thd_pct', 0.1 + 0.2, fig('thd_pct', 0.3)).within).toBe(true);
  });

  it('rejects mismatched metrics, non-finite values and ratios of zero', () => {
    expect(() => checkAgainstSpec('thd_pct', 0.1, fig('snr_line_db', 90))).toThrow(RangeError);
    expect(() => checkAgainstSpec('snr_line_db', Number.NaN, fig('snr_line_db', 90))).toThrow(RangeError);
    expect(() => checkAgainstSpec('thd_pct', 0, fig('thd_pct', 0.05))).toThrow(/above zero/);
  });
});

describe('checkAgainstSpec: properties', () => {
  const value = fc.double({ min: 1e-3, max: 1e5, noNaN: true });

  it('within means "at least as good as published" in the metric’s direction', () => {
    fc.assert(
      fc.property(fc.constantFrom(...SPEC_METRICS), value, value, (metric, measured, published) => {
        fc.pre(Math.abs(measured - published) > 1e-6 * published);
        const res = checkAgainstSpec(metric, measured, fig(metric, published));
        const better = SPEC_METRIC_INFO[metric].direction === 'higher_is_better' ? measured > published : measured < published;
        return res.within === better && Math.sign(res.margin) === (better ? 1 : -1);
      }),
      { seed: 20260101, numRuns: 500 },
    );
  });

  it('swapping measured and published flips the sign of a ratio margin', () => {
    const ratioMetrics = SPEC_METRICS.filter((m) => SPEC_METRIC_INFO[m].marginKind !== 'db');
    fc.assert(
      fc.property(fc.constantFrom(...ratioMetrics), value, value, (metric, a, b) => {
        const ab = checkAgainstSpec(metric, a, fig(metric, b)).margin;
        const ba = checkAgainstSpec(metric, b, fig(metric, a)).margin;
        return Math.abs(ab + ba) < 1e-9 * Math.max(1, Math.abs(ab));
      }),
      { seed: 7, numRuns: 300 },
    );
  });
});

describe('formatSpecValue', () => {
  it('writes figures the way sheets print them', () => {
    expect(formatSpecValue('power_8ohm_w', 70)).toBe('70 W');
    expect(formatSpecValue('thd_pct', 0.05)).toBe('0.05 %');
    expect(formatSpecValue('response_high_hz', 50_000)).toBe('50 kHz');
    expect(formatSpecValue('response_low_hz', 10)).toBe('10 Hz');
    expect(formatSpecValue('response_tolerance_db', 1)).toBe('±1 dB');
  });
});
