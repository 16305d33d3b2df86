import { and, asc, eq } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { biasReadings, partsUsed, railChecks } from '../db/schema/index';
import {
  biasWithin,
  lineTotalMinor,
  railCheck,
  type Bias,
  type BiasInput,
  type BiasUpdate,
  type Part,
  type PartInput,
  type PartUpdate,
  type Rail,
  type RailInput,
  type RailUpdate,
} from '../../shared/repair-log';
import { notFound } from '../http-error';
import { jobInShop } from './job-access';

// Parts used, rail checks and bias readings: one row each, always reached through the shop.
// The within/outside verdicts are computed on read from shared/repair-log.ts, never stored,
// so a changed tolerance cannot leave a stale verdict behind.

const toPart = (r: typeof partsUsed.$inferSelect): Part => ({
  id: r.id,
  jobId: r.jobId,
  reference: r.reference,
  partNumber: r.partNumber,
  description: r.description,
  quantity: r.quantity,
  unitCostMinor: r.unitCostMinor,
  lineTotalMinor: lineTotalMinor(r.quantity, r.unitCostMinor),
  createdAt: r.createdAt.toISOString(),
});

const toRail = (r: typeof railChecks.$inferSelect): Rail => ({
  id: r.id,
  jobId: r.jobId,
  rail: r.rail,
  nominalV: r.nominalV,
  measuredV: r.measuredV,
  tolerancePct: r.tolerancePct,
  note: r.note,
  ...railCheck(r.nominalV, r.measuredV, r.tolerancePct),
  createdAt: r.createdAt.toISOString(),
});

const toBias = (r: typeof biasReadings.$inferSelect): Bias => ({
  id: r.id,
  jobId: r.jobId,
  channel: r.channel,
  testPoint: r.testPoint,
  targetMv: r.targetMv,
  toleranceMv: r.toleranceMv,
  coldMv: r.coldMv,
  warmUpMinutes: r.warmUpMinutes,
  warmMv: r.warmMv,
  finalMv: r.finalMv,
  note: r.note,
  coldWithin: biasWithin(r.targetMv, r.toleranceMv, r.coldMv),
  warmWithin: biasWithin(r.targetMv, r.toleranceMv, r.warmMv),
  finalWithin: biasWithin(r.targetMv, r.toleranceMv, r.finalMv),
  createdAt: r.createdAt.toISOString(),
});

export const parts = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Part[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(partsUsed).where(eq(partsUsed.jobId, jobId)).orderBy(asc(partsUsed.createdAt), asc(partsUsed.id));
    return rows.map(toPart);
  },
  async create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: PartInput): Promise<Part> {
    await jobInShop(db, shopId, jobId);
    const [row] = await db.insert(partsUsed).values({ ...input, shopId, jobId, createdBy: userId }).returning();
    return toPart(row!);
  },
  async update(db: DbOrTx, shopId: number, id: number, input: PartUpdate): Promise<Part> {
    const [row] = await db.update(partsUsed).set(input).where(and(eq(partsUsed.shopId, shopId), eq(partsUsed.id, id))).returning();
    if (!row) throw notFound('Part');
    return toPart(row);
  },
  async remove(db: DbOrTx, shopId: number, id: number): Promise<void> {
    const gone = await db.delete(partsUsed).where(and(eq(partsUsed.shopId, shopId), eq(partsUsed.id, id))).returning({ id: partsUsed.id });
    if (!gone.length) throw notFound('Part');
  },
};

export const rails = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Rail[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(railChecks).where(eq(railChecks.jobId, jobId)).orderBy(asc(railChecks.createdAt), asc(railChecks.id));
    return rows.map(toRail);
  },
  async create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: RailInput): Promise<Rail> {
    await jobInShop(db, shopId, jobId);
    const [row] = await db.insert(railChecks).values({ ...input, shopId, jobId, createdBy: userId }).returning();
    return toRail(row!);
  },
  async update(db: DbOrTx, shopId: number, id: number, input: RailUpdate): Promise<Rail> {
    const [row] = await db.update(railChecks).set(input).where(and(eq(railChecks.shopId, shopId), eq(railChecks.id, id))).returning();
    if (!row) throw notFound('Rail check');
    return toRail(row);
  },
  async remove(db: DbOrTx, shopId: number, id: number): Promise<void> {
    const gone = await db.delete(railChecks).where(and(eq(railChecks.shopId, shopId), eq(railChecks.id, id))).returning({ id: railChecks.id });
    if (!gone.length) throw notFound('Rail check');
  },
};

export const bias = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Bias[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(biasReadings).where(eq(biasReadings.jobId, jobId)).orderBy(asc(biasReadings.channel), asc(biasReadings.id));
    return rows.map(toBias);
  },
  async create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: BiasInput): Promise<Bias> {
    await jobInShop(db, shopId, jobId);
    const [row] = await db.insert(biasReadings).values({ ...input, shopId, jobId, createdBy: userId }).returning();
    return toBias(row!);
  },
  async update(db: DbOrTx, shopId: number, id: number, input: BiasUpdate): Promise<Bias> {
    const [row] = await db.update(biasReadings).set(input).where(and(eq(biasReadings.shopId, shopId), eq(biasReadings.id, id))).returning();
    if (!row) throw notFound('Bias reading');
    return toBias(row);
  },
  async remove(db: DbOrTx, shopId: number, id: number): Promise<void> {
    const gone = await db.delete(biasReadings).where(and(eq(biasReadings.shopId, shopId), eq(biasReadings.id, id))).returning({ id: biasReadings.id });
    if (!gone.length) throw notFound('Bias reading');
  },
};
