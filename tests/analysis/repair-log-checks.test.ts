import { describe, expect, it } from 'vitest';
import { biasWithin, lineTotalMinor, railCheck } from '../../shared/repair-log';
import { SIGNAL_PATH_TEMPLATES } from '../../shared/test-points';
import { UNIT_KINDS } from '../../shared/customers';

describe('railCheck: deviation = (measured − nominal) / |nominal| · 100', () => {
  it('takes the tolerance edge as inside, just past it as outside', () => {
    expect(railCheck(35, 36.75, 5)).toMatchObject({ within: true });
    expect(railCheck(35, 36.75, 5).deviationPct).toBeCloseTo(5, 9);
    expect(railCheck(35, 36.76, 5).within).toBe(false);
    expect(railCheck(35, 33.25, 5).within).toBe(true);
  });
  it('handles negative rails: a more negative reading is a negative deviation', () => {
    expect(railCheck(-38, -40, 5).deviationPct).toBeCloseTo((-100 * 2) / 38, 9);
    expect(railCheck(-38, -40, 5).within).toBe(false);
    expect(railCheck(-38, -37.2, 5)).toMatchObject({ within: true });
  });
  it('rejects a zero nominal and a tolerance of zero', () => {
    expect(() => railCheck(0, 1, 5)).toThrow(RangeError);
    expect(() => railCheck(15, 15, 0)).toThrow(RangeError);
  });
});

describe('biasWithin', () => {
  it('judges |reading − target| ≤ tolerance, null when not read', () => {
    expect(biasWithin(10, 2, 12)).toBe(true);
    expect(biasWithin(10, 2, 12.01)).toBe(false);
    expect(biasWithin(10, 2, 7.99)).toBe(false);
    expect(biasWithin(10, 2, null)).toBeNull();
    expect(() => biasWithin(10, 0, 10)).toThrow(RangeError);
  });
});

describe('parts', () => {
  it('line total is quantity × unit cost in minor units', () => {
    expect(lineTotalMinor(3, 480)).toBe(1440);
  });
});

describe('signal-path templates', () => {
  it.each([...UNIT_KINDS])('%s: at least input and output, names unique, from the input socket', (kind) => {
    const t = SIGNAL_PATH_TEMPLATES[kind];
    expect(t.length).toBeGreaterThanOrEqual(2);
    expect(new Set(t.map((p) => p.name)).size).toBe(t.length);
    expect(t[0]!.name).toBe('Input socket');
  });
  it('the amplifiers end at the speaker terminals, the phono stage at its output socket', () => {
    for (const kind of ['integrated_amplifier', 'receiver', 'power_amplifier'] as const) expect(SIGNAL_PATH_TEMPLATES[kind].at(-1)!.name).toBe('Speaker terminals');
    expect(SIGNAL_PATH_TEMPLATES.phono_stage.map((p) => p.name)).toEqual(['Input socket', 'First gain stage output', 'RIAA network output', 'Output socket']);
  });
});
