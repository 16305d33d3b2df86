import { z } from 'zod';

// Parts used, supply rail checks and the bias log of one job. Money is in minor units (cents) of
// the shop's currency; voltages in volts for rails and millivolts for bias, as service manuals
// usually give them.

const text = (max: number) => z.string().trim().max(max);
const finite = (min: number, max: number) => z.number().finite().min(min).max(max);
const nonEmpty = (v: object) => Object.keys(v).length > 0;
const nothingToChange = { message: 'Nothing to change' };

const partShape = {
  /** Reference designator on the board, e.g. "IC301" or "C512, C513". */
  reference: text(60).min(1, 'Give the reference designator'),
  partNumber: text(120),
  description: text(500),
  quantity: z.number().int().min(1, 'At least one').max(10_000),
  unitCostMinor: z.number().int().min(0).max(100_000_000),
};
export const partInputSchema = z
  .object({ ...partShape, partNumber: partShape.partNumber.default(''), description: partShape.description.default('') })
  .strict();
export type PartInput = z.infer<typeof partInputSchema>;
// Update schemas are built from the shapes without defaults, so a PATCH never blanks a field it omits.
export const partUpdateSchema = z.object(partShape).partial().strict().refine(nonEmpty, nothingToChange);
export type PartUpdate = z.infer<typeof partUpdateSchema>;

export const partSchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  reference: z.string(),
  partNumber: z.string(),
  description: z.string(),
  quantity: z.number().int(),
  unitCostMinor: z.number().int(),
  lineTotalMinor: z.number().int(),
  createdAt: z.string(),
});
export type Part = z.infer<typeof partSchema>;

const railShape = {
  rail: text(80).min(1, 'Name the rail, e.g. "+B main"'),
  /** Negative for a negative rail; zero has no percentage tolerance. */
  nominalV: finite(-5000, 5000).refine((v) => v !== 0, { message: 'Nominal voltage cannot be zero' }),
  measuredV: finite(-5000, 5000),
  tolerancePct: finite(0, 100).refine((v) => v > 0, { message: 'Tolerance must be above 0 %' }),
  note: text(1000),
};
export const railInputSchema = z.object({ ...railShape, note: railShape.note.default('') }).strict();
export type RailInput = z.infer<typeof railInputSchema>;
export const railUpdateSchema = z.object(railShape).partial().strict().refine(nonEmpty, nothingToChange);
export type RailUpdate = z.infer<typeof railUpdateSchema>;

export const railSchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  rail: z.string(),
  nominalV: z.number(),
  measuredV: z.number(),
  tolerancePct: z.number(),
  note: z.string(),
  deviationPct: z.number(),
  within: z.boolean(),
  createdAt: z.string(),
});
export type Rail = z.infer<typeof railSchema>;

const reading = finite(-100_000, 100_000).nullable();
const biasShape = {
  channel: text(40).min(1, 'Name the channel, e.g. "Left"'),
  /** Where the bias is read, e.g. "TP501 across R512". */
  testPoint: text(120).min(1, 'Say where the bias is read'),
  targetMv: finite(0, 100_000).refine((v) => v > 0, { message: 'Target must be above 0 mV' }),
  toleranceMv: finite(0, 100_000).refine((v) => v > 0, { message: 'Tolerance must be above 0 mV' }),
  coldMv: reading,
  warmUpMinutes: z.number().int().min(0).max(24 * 60).nullable(),
  warmMv: reading,
  finalMv: reading,
  note: text(1000),
};
export const biasInputSchema = z
  .object({
    ...biasShape,
    coldMv: reading.default(null),
    warmUpMinutes: biasShape.warmUpMinutes.default(null),
    warmMv: reading.default(null),
    finalMv: reading.default(null),
    note: biasShape.note.default(''),
  })
  .strict();
export type BiasInput = z.infer<typeof biasInputSchema>;
export const biasUpdateSchema = z.object(biasShape).partial().strict().refine(nonEmpty, nothingToChange);
export type BiasUpdate = z.infer<typeof biasUpdateSchema>;

export const biasSchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  channel: z.string(),
  testPoint: z.string(),
  targetMv: z.number(),
  toleranceMv: z.number(),
  coldMv: z.number().nullable(),
  warmUpMinutes: z.number().int().nullable(),
  warmMv: z.number().nullable(),
  finalMv: z.number().nullable(),
  note: z.string(),
  coldWithin: z.boolean().nullable(),
  warmWithin: z.boolean().nullable(),
  finalWithin: z.boolean().nullable(),
  createdAt: z.string(),
});
export type Bias = z.infer<typeof biasSchema>;

/**
 * Relative allowance so that a reading exactly on the tolerance edge counts as inside despite
 * binary rounding (e.g. 36.75 V against 35 V ± 5 % computes to 5.000000000000004 %).
 */
const EDGE = 1e-9;

/** A rail reading against nominal ± tolerance %. Deviation is signed, relative to |nominal|. */
export function railCheck(nominalV: number, measuredV: number, tolerancePct: number): { deviationPct: number; within: boolean } {
  if (!Number.isFinite(nominalV) || nominalV === 0) throw new RangeError('nominalV must be a non-zero number');
  if (!Number.isFinite(measuredV)) throw new RangeError('measuredV must be a number');
  if (!Number.isFinite(tolerancePct) || tolerancePct <= 0) throw new RangeError('tolerancePct must be above 0');
  const deviationPct = ((measuredV - nominalV) / Math.abs(nominalV)) * 100;
  return { deviationPct, within: Math.abs(deviationPct) <= tolerancePct * (1 + EDGE) };
}

/** A bias reading against target ± tolerance mV; null when nothing was read. */
export function biasWithin(targetMv: number, toleranceMv: number, readingMv: number | null): boolean | null {
  if (readingMv === null) return null;
  if (!Number.isFinite(targetMv) || !Number.isFinite(toleranceMv) || toleranceMv <= 0) {
    throw new RangeError('target and a positive tolerance are needed');
  }
  return Math.abs(readingMv - targetMv) <= toleranceMv * (1 + EDGE);
}

export const lineTotalMinor = (quantity: number, unitCostMinor: number) => quantity * unitCostMinor;
