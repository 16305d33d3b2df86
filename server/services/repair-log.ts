import { and, asc, eq } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { biasReadings, jobEvents, partsUsed, railChecks } from '../db/schema/index';
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

// Parts used, rail checks and bias readings: one row each, always reached through the shop, and
// each change is written to the job's trail in the same transaction.
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

/** One line in the job's trail for each repair-log change, written in the change's transaction. */
async function logToTrail(tx: DbOrTx, shopId: number, jobId: number, userId: number, note: string): Promise<void> {
  await tx.insert(jobEvents).values({ shopId, jobId, userId, kind: 'repair_log', note });
}

const mv = (v: number | null) => (v === null ? '—' : `${v} mV`);
const partText = (p: Part) => `${p.reference ? `${p.reference}: ` : ''}${p.description}${p.partNumber ? ` (${p.partNumber})` : ''} × ${p.quantity}`;
const railText = (r: Rail) => `${r.rail} measured ${r.measuredV} V against ${r.nominalV} V ± ${r.tolerancePct} % — ${r.within ? 'within' : 'outside'}`;
const biasText = (b: Bias) => {
  const reading = b.finalMv !== null ? `final ${mv(b.finalMv)}` : b.warmMv !== null ? `warm ${mv(b.warmMv)}` : `cold ${mv(b.coldMv)}`;
  const within = b.finalMv !== null ? b.finalWithin : b.warmMv !== null ? b.warmWithin : b.coldWithin;
  return `channel ${b.channel}${b.testPoint ? ` at ${b.testPoint}` : ''}: ${reading} against ${b.targetMv} ± ${b.toleranceMv} mV${within === null ? '' : within ? ' — within' : ' — outside'}`;
};

export const parts = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Part[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(partsUsed).where(eq(partsUsed.jobId, jobId)).orderBy(asc(partsUsed.createdAt), asc(partsUsed.id));
    return rows.map(toPart);
  },
  async create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: PartInput): Promise<Part> {
    return db.transaction(async (tx) => {
      await jobInShop(tx, shopId, jobId);
      const [row] = await tx.insert(partsUsed).values({ ...input, shopId, jobId, createdBy: userId }).returning();
      const part = toPart(row!);
      await logToTrail(tx, shopId, jobId, userId, `Part added — ${partText(part)}`);
      return part;
    });
  },
  async update(db: DbOrTx, shopId: number, userId: number, id: number, input: PartUpdate): Promise<Part> {
    return db.transaction(async (tx) => {
      const [row] = await tx.update(partsUsed).set(input).where(and(eq(partsUsed.shopId, shopId), eq(partsUsed.id, id))).returning();
      if (!row) throw notFound('Part');
      const part = toPart(row);
      await logToTrail(tx, shopId, row.jobId, userId, `Part changed — ${partText(part)}`);
      return part;
    });
  },
  async remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void> {
    await db.transaction(async (tx) => {
      const [row] = await tx.delete(partsUsed).where(and(eq(partsUsed.shopId, shopId), eq(partsUsed.id, id))).returning();
      if (!row) throw notFound('Part');
      await logToTrail(tx, shopId, row.jobId, userId, `Part removed — ${partText(toPart(row))}`);
    });
  },
};

export const rails = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Rail[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(railChecks).where(eq(railChecks.jobId, jobId)).orderBy(asc(railChecks.createdAt), asc(railChecks.id));
    return rows.map(toRail);
  },
  async create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: RailInput): Promise<Rail> {
    return db.transaction(async (tx) => {
      await jobInShop(tx, shopId, jobId);
      const [row] = await tx.insert(railChecks).values({ ...input, shopId, jobId, createdBy: userId }).returning();
      const rail = toRail(row!);
      await logToTrail(tx, shopId, jobId, userId, `Rail check added — ${railText(rail)}`);
      return rail;
    });
  },
  async update(db: DbOrTx, shopId: number, userId: number, id: number, input: RailUpdate): Promise<Rail> {
    return db.transaction(async (tx) => {
      const [row] = await tx.update(railChecks).set(input).where(and(eq(railChecks.shopId, shopId), eq(railChecks.id, id))).returning();
      if (!row) throw notFound('Rail check');
      const rail = toRail(row);
      await logToTrail(tx, shopId, row.jobId, userId, `Rail check changed — ${railText(rail)}`);
      return rail;
    });
  },
  async remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void> {
    await db.transaction(async (tx) => {
      const [row] = await tx.delete(railChecks).where(and(eq(railChecks.shopId, shopId), eq(railChecks.id, id))).returning();
      if (!row) throw notFound('Rail check');
      await logToTrail(tx, shopId, row.jobId, userId, `Rail check removed — ${railText(toRail(row))}`);
    });
  },
};

export const bias = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Bias[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(biasReadings).where(eq(biasReadings.jobId, jobId)).orderBy(asc(biasReadings.channel), asc(biasReadings.id));
    return rows.map(toBias);
  },
  async create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: BiasInput): Promise<Bias> {
    return db.transaction(async (tx) => {
      await jobInShop(tx, shopId, jobId);
      const [row] = await tx.insert(biasReadings).values({ ...input, shopId, jobId, createdBy: userId }).returning();
      const reading = toBias(row!);
      await logToTrail(tx, shopId, jobId, userId, `Bias reading added — ${biasText(reading)}`);
      return reading;
    });
  },
  async update(db: DbOrTx, shopId: number, userId: number, id: number, input: BiasUpdate): Promise<Bias> {
    return db.transaction(async (tx) => {
      const [row] = await tx.update(biasReadings).set(input).where(and(eq(biasReadings.shopId, shopId), eq(biasReadings.id, id))).returning();
      if (!row) throw notFound('Bias reading');
      const reading = toBias(row);
      await logToTrail(tx, shopId, row.jobId, userId, `Bias reading changed — ${biasText(reading)}`);
      return reading;
    });
  },
  async remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void> {
    await db.transaction(async (tx) => {
      const [row] = await tx.delete(biasReadings).where(and(eq(biasReadings.shopId, shopId), eq(biasReadings.id, id))).returning();
      if (!row) throw notFound('Bias reading');
      await logToTrail(tx, shopId, row.jobId, userId, `Bias reading removed — ${biasText(toBias(row))}`);
    });
  },
};
