/**
 * Invoice arithmetic. Hand-worked cases, properties, and a cross-check against PostgreSQL's own
 * numeric round() (half away from zero, which is half-up for the non-negative amounts we allow),
 * an implementation independent of ours.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { sql } from 'drizzle-orm';
import { divRoundHalfUp, formatMoney, formatQuantity, formatRateBp, hoursToMilli, invoiceTotals, lineAmountMinor } from '../../shared/money';
import { testDb } from '../support/server';
import type { Db } from '../../server/db/client';

let db: Db;
let close: () => Promise<void>;
beforeAll(() => {
  ({ db, close } = testDb());
});
afterAll(() => close());

describe('half-up rounding', () => {
  it.each([
    [5n, 2n, 3n], // 2.5 → 3
    [7n, 2n, 4n], // 3.5 → 4
    [1n, 3n, 0n], // 0.333 → 0
    [2n, 3n, 1n], // 0.667 → 1
    [0n, 7n, 0n],
    [10n, 5n, 2n],
  ])('%i / %i = %i', (n, d, q) => {
    expect(divRoundHalfUp(n, d)).toBe(q);
  });
  it('refuses a zero denominator and negative amounts', () => {
    expect(() => divRoundHalfUp(1n, 0n)).toThrow(RangeError);
    expect(() => divRoundHalfUp(-1n, 2n)).toThrow(RangeError);
  });
});

describe('line amounts and totals (worked by hand)', () => {
  it('1.5 h at 65.00 is 97.50', () => {
    expect(lineAmountMinor({ quantityMilli: hoursToMilli(1.5), unitPriceMinor: 6500 })).toBe(9750);
  });
  it('0.333 × 10.00 = 3.33; 0.001 × 35.00 = 0.035 is an exact half and goes up to 0.04', () => {
    expect(lineAmountMinor({ quantityMilli: 333, unitPriceMinor: 1000 })).toBe(333);
    expect(lineAmountMinor({ quantityMilli: 1, unitPriceMinor: 3500 })).toBe(4); // 0.001 × 35.00 = 0.035 → 0.04
    expect(lineAmountMinor({ quantityMilli: 1, unitPriceMinor: 3499 })).toBe(3);
  });
  it('tax is rounded once on the subtotal, not per line', () => {
    // Three lines of 0.05 at 10 %: per-line tax would be 3 × round(0.5) = 3; on the subtotal 15 × 10 % = 1.5 → 2.
    const t = invoiceTotals({ lines: Array(3).fill({ quantityMilli: 1000, unitPriceMinor: 5 }), taxRateBp: 1000 });
    expect(t).toEqual({ lineAmountsMinor: [5, 5, 5], subtotalMinor: 15, taxMinor: 2, totalMinor: 17 });
  });
  it('20 % of 43.33 is 8.67 (8.666 rounds up); 20 % of 43.32 is 8.66 (8.664 rounds down)', () => {
    expect(invoiceTotals({ lines: [{ quantityMilli: 1000, unitPriceMinor: 4333 }], taxRateBp: 2000 }).taxMinor).toBe(867);
    expect(invoiceTotals({ lines: [{ quantityMilli: 1000, unitPriceMinor: 4332 }], taxRateBp: 2000 }).taxMinor).toBe(866);
  });
  it('an empty invoice totals zero; out-of-range inputs are refused', () => {
    expect(invoiceTotals({ lines: [], taxRateBp: 2000 })).toEqual({ lineAmountsMinor: [], subtotalMinor: 0, taxMinor: 0, totalMinor: 0 });
    expect(() => lineAmountMinor({ quantityMilli: 1.5, unitPriceMinor: 100 })).toThrow(RangeError);
    expect(() => lineAmountMinor({ quantityMilli: 1000, unitPriceMinor: -1 })).toThrow(RangeError);
    expect(() => invoiceTotals({ lines: [], taxRateBp: 10_001 })).toThrow(RangeError);
  });
});

const lineArb = fc.record({ quantityMilli: fc.integer({ min: 1, max: 100_000_000 }), unitPriceMinor: fc.integer({ min: 0, max: 1_000_000_000 }) });

describe('properties', () => {
  it('total = subtotal + tax, and each rounding is within half a minor unit of the exact value', () => {
    fc.assert(
      fc.property(fc.array(lineArb, { maxLength: 8 }), fc.integer({ min: 0, max: 10_000 }), (lines, taxRateBp) => {
        const t = invoiceTotals({ lines, taxRateBp });
        expect(t.totalMinor).toBe(t.subtotalMinor + t.taxMinor);
        lines.forEach((l, i) => {
          const exact2 = 2n * BigInt(l.quantityMilli) * BigInt(l.unitPriceMinor); // 2000 × exact
          const diff = BigInt(t.lineAmountsMinor[i]!) * 2000n - exact2;
          expect(diff > -1000n && diff <= 1000n).toBe(true); // within (−½, +½]
        });
        const taxDiff = BigInt(t.taxMinor) * 20_000n - 2n * BigInt(t.subtotalMinor) * BigInt(taxRateBp);
        expect(taxDiff > -10_000n && taxDiff <= 10_000n).toBe(true);
      }),
      { seed: 20260401, numRuns: 300 },
    );
  });
});

describe("cross-check against PostgreSQL's numeric round()", () => {
  it('line amounts and tax agree with round(numeric) on 200 seeded cases, halves included', async () => {
    const cases = fc.sample(
      fc.record({
        q: fc.oneof(fc.integer({ min: 1, max: 5000 }), fc.constantFrom(1, 5, 500, 1500, 2500)),
        p: fc.oneof(fc.integer({ min: 0, max: 200_000 }), fc.constantFrom(5, 15, 25, 3500)),
        rate: fc.oneof(fc.integer({ min: 0, max: 10_000 }), fc.constantFrom(500, 1000, 2000, 2500)),
      }),
      { seed: 77, numRuns: 200 },
    );
    const values = sql.join(
      cases.map((c, i) => sql`(${i}::int, ${c.q}::bigint, ${c.p}::bigint, ${c.rate}::bigint)`),
      sql`, `,
    );
    const { rows } = await db.execute(
      sql`select round(q::numeric * p / 1000)::bigint as line, round(round(q::numeric * p / 1000) * rate / 10000)::bigint as tax from (values ${values}) as t(i, q, p, rate) order by i`,
    );
    cases.forEach((c, i) => {
      const ours = invoiceTotals({ lines: [{ quantityMilli: c.q, unitPriceMinor: c.p }], taxRateBp: c.rate });
      const theirs = rows[i] as { line: string; tax: string };
      expect([ours.subtotalMinor, ours.taxMinor]).toEqual([Number(theirs.line), Number(theirs.tax)]);
    });
  });
});

describe('formatting', () => {
  it('shows money, quantities and rates plainly', () => {
    expect(formatMoney(123456, 'EUR')).toBe('€1,234.56');
    expect(formatQuantity(1500)).toBe('1.5');
    expect(formatQuantity(2000)).toBe('2');
    expect(formatRateBp(2000)).toBe('20 %');
    expect(formatRateBp(825)).toBe('8.25 %');
  });
});
