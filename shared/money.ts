/**
 * Invoice arithmetic in integer minor units (cents). No floating point touches money.
 *
 * Rounding rule (stated once, used everywhere): half-up, i.e. a remainder of exactly one half
 * goes to the larger amount. All inputs are non-negative, so half-up equals PostgreSQL's
 * round(numeric) (half away from zero), which the tests use as an independent check.
 * - Line amount = quantity × unit price, with the quantity in thousandths (quantityMilli, so
 *   1.5 h of labour is 1500), rounded half-up to a whole minor unit per line.
 * - Subtotal = sum of the rounded line amounts.
 * - Tax = subtotal × rate in basis points / 10 000, rounded half-up once, on the subtotal (not
 *   per line).
 * - Total = subtotal + tax.
 */

export const MAX_QUANTITY_MILLI = 100_000_000; // 100 000 units
export const MAX_UNIT_PRICE_MINOR = 1_000_000_000; // 10 million in major units
export const MAX_TAX_RATE_BP = 10_000; // 100 %

/** round(numerator / denominator) half-up, for non-negative integers (BigInt, so nothing overflows). */
export function divRoundHalfUp(numerator: bigint, denominator: bigint): bigint {
  if (denominator <= 0n) throw new RangeError('denominator must be positive');
  if (numerator < 0n) throw new RangeError('numerator must not be negative');
  return (2n * numerator + denominator) / (2n * denominator);
}

function checkInt(name: string, value: number, max: number): void {
  if (!Number.isSafeInteger(value) || value < 0 || value > max) {
    throw new RangeError(`${name} must be a whole number from 0 to ${max}, got ${value}`);
  }
}

export function lineAmountMinor({ quantityMilli, unitPriceMinor }: { quantityMilli: number; unitPriceMinor: number }): number {
  checkInt('quantityMilli', quantityMilli, MAX_QUANTITY_MILLI);
  checkInt('unitPriceMinor', unitPriceMinor, MAX_UNIT_PRICE_MINOR);
  return Number(divRoundHalfUp(BigInt(quantityMilli) * BigInt(unitPriceMinor), 1000n));
}

export interface TotalsInput {
  lines: { quantityMilli: number; unitPriceMinor: number }[];
  taxRateBp: number;
}

export interface Totals {
  lineAmountsMinor: number[];
  subtotalMinor: number;
  taxMinor: number;
  totalMinor: number;
}

export function invoiceTotals({ lines, taxRateBp }: TotalsInput): Totals {
  checkInt('taxRateBp', taxRateBp, MAX_TAX_RATE_BP);
  const lineAmountsMinor = lines.map(lineAmountMinor);
  const subtotal = lineAmountsMinor.reduce((s, a) => s + BigInt(a), 0n);
  const tax = divRoundHalfUp(subtotal * BigInt(taxRateBp), 10_000n);
  const total = subtotal + tax;
  if (total > BigInt(Number.MAX_SAFE_INTEGER)) throw new RangeError('invoice total is too large');
  return { lineAmountsMinor, subtotalMinor: Number(subtotal), taxMinor: Number(tax), totalMinor: Number(total) };
}

/** Hours (as stored on a job, e.g. 1.25) to thousandths, rounded to the nearest thousandth. */
export const hoursToMilli = (hours: number): number => Math.round(hours * 1000);

/** Minor-unit digits per currency (ISO 4217); the shop's currency list is small on purpose. */
export const CURRENCIES = ['EUR', 'GBP', 'USD', 'CHF', 'SEK', 'NOK', 'DKK', 'PLN', 'CZK', 'CAD', 'AUD', 'NZD'] as const;
export type Currency = (typeof CURRENCIES)[number];

/** "€1,234.56" style text for a minor-unit amount; every listed currency has 2 minor digits. */
export function formatMoney(minor: number, currency: string, locale = 'en-GB'): string {
  return new Intl.NumberFormat(locale, { style: 'currency', currency }).format(minor / 100);
}

/** Quantity in thousandths as short text: 1500 → "1.5", 2000 → "2". */
export function formatQuantity(quantityMilli: number): string {
  return (quantityMilli / 1000).toFixed(3).replace(/\.?0+$/, '');
}

/** Basis points as a percentage: 2000 → "20 %", 825 → "8.25 %". */
export function formatRateBp(bp: number): string {
  return `${(bp / 100).toFixed(2).replace(/\.?0+$/, '')} %`;
}
