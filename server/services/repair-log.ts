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

/**
 * One repair-log change and its line in the job's trail, in one transaction. `change` returns the
 * row it wrote or removed (nothing: not in this shop); the trail line reads "<What> <verb> — …".
 */
async function withTrail<Row extends { jobId: number }, Out>(
  db: DbOrTx,
  ids: { shopId: number; userId: number },
  what: string,
  verb: 'added' | 'changed' | 'removed',
  change: (tx: DbOrTx) => Promise<Row | undefined>,
  show: (row: Row) => Out,
  describe: (out: Out) => string,
): Promise<Out> {
  return db.transaction(async (tx) => {
    const row = await change(tx);
    if (!row) throw notFound(what);
    const out = show(row);
    await tx.insert(jobEvents).values({ shopId: ids.shopId, jobId: row.jobId, userId: ids.userId, kind: 'repair_log', note: `${what} ${verb} — ${describe(out)}` });
    return out;
  });
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
  create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: PartInput): Promise<Part> {
    const insert = async (tx: DbOrTx) => {
      await jobInShop(tx, shopId, jobId);
      return (await tx.insert(partsUsed).values({ ...input, shopId, jobId, createdBy: userId }).returning())[0];
    };
    return withTrail(db, { shopId, userId }, 'Part', 'added', insert, toPart, partText);
  },
  update(db: DbOrTx, shopId: number, userId: number, id: number, input: PartUpdate): Promise<Part> {
    const mine = and(eq(partsUsed.shopId, shopId), eq(partsUsed.id, id));
    return withTrail(db, { shopId, userId }, 'Part', 'changed', async (tx) => (await tx.update(partsUsed).set(input).where(mine).returning())[0], toPart, partText);
  },
  async remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void> {
    const mine = and(eq(partsUsed.shopId, shopId), eq(partsUsed.id, id));
    await withTrail(db, { shopId, userId }, 'Part', 'removed', async (tx) => (await tx.delete(partsUsed).where(mine).returning())[0], toPart, partText);
  },
};

export const rails = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Rail[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(railChecks).where(eq(railChecks.jobId, jobId)).orderBy(asc(railChecks.createdAt), asc(railChecks.id));
    return rows.map(toRail);
  },
  create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: RailInput): Promise<Rail> {
    const insert = async (tx: DbOrTx) => {
      await jobInShop(tx, shopId, jobId);
      return (await tx.insert(railChecks).values({ ...input, shopId, jobId, createdBy: userId }).returning())[0];
    };
    return withTrail(db, { shopId, userId }, 'Rail check', 'added', insert, toRail, railText);
  },
  update(db: DbOrTx, shopId: number, userId: number, id: number, input: RailUpdate): Promise<Rail> {
    const mine = and(eq(railChecks.shopId, shopId), eq(railChecks.id, id));
    return withTrail(db, { shopId, userId }, 'Rail check', 'changed', async (tx) => (await tx.update(railChecks).set(input).where(mine).returning())[0], toRail, railText);
  },
  async remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void> {
    const mine = and(eq(railChecks.shopId, shopId), eq(railChecks.id, id));
    await withTrail(db, { shopId, userId }, 'Rail check', 'removed', async (tx) => (await tx.delete(railChecks).where(mine).returning())[0], toRail, railText);
  },
};

export const bias = {
  async list(db: DbOrTx, shopId: number, jobId: number): Promise<Bias[]> {
    await jobInShop(db, shopId, jobId);
    const rows = await db.select().from(biasReadings).where(eq(biasReadings.jobId, jobId)).orderBy(asc(biasReadings.channel), asc(biasReadings.id));
    return rows.map(toBias);
  },
  create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: BiasInput): Promise<Bias> {
    const insert = async (tx: DbOrTx) => {
      await jobInShop(tx, shopId, jobId);
      return (await tx.insert(biasReadings).values({ ...input, shopId, jobId, createdBy: userId }).returning())[0];
    };
    return withTrail(db, { shopId, userId }, 'Bias reading', 'added', insert, toBias, biasText);
  },
  update(db: DbOrTx, shopId: number, userId: number, id: number, input: BiasUpdate): Promise<Bias> {
    const mine = and(eq(biasReadings.shopId, shopId), eq(biasReadings.id, id));
    return withTrail(db, { shopId, userId }, 'Bias reading', 'changed', async (tx) => (await tx.update(biasReadings).set(input).where(mine).returning())[0], toBias, biasText);
  },
  async remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void> {
    const mine = and(eq(biasReadings.shopId, shopId), eq(biasReadings.id, id));
    await withTrail(db, { shopId, userId }, 'Bias reading', 'removed', async (tx) => (await tx.delete(biasReadings).where(mine).returning())[0], toBias, biasText);
  },
};
