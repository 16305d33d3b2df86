import { and, asc, eq, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client';
import { testPoints } from '../db/schema/index';
import type { TestPoint, TestPointCreate, TestPointUpdate } from '../../shared/test-points';
import { conflict, notFound } from '../http-error';
import { jobInShop, lockJob } from './job-access';

const columns = {
  id: testPoints.id,
  jobId: testPoints.jobId,
  position: testPoints.position,
  name: testPoints.name,
  description: testPoints.description,
};

async function ordered(db: DbOrTx, jobId: number): Promise<TestPoint[]> {
  return db.select(columns).from(testPoints).where(eq(testPoints.jobId, jobId)).orderBy(asc(testPoints.position), asc(testPoints.id));
}

/** Positions 1..n in the given order, so gaps left by deletions never accumulate. */
async function renumber(tx: DbOrTx, ids: number[]): Promise<void> {
  for (const [i, id] of ids.entries()) await tx.update(testPoints).set({ position: i + 1 }).where(eq(testPoints.id, id));
}

export async function listTestPoints(db: DbOrTx, shopId: number, jobId: number): Promise<TestPoint[]> {
  await jobInShop(db, shopId, jobId);
  return ordered(db, jobId);
}

export async function createTestPoint(db: Db, shopId: number, jobId: number, input: TestPointCreate): Promise<TestPoint> {
  return db.transaction(async (tx) => {
    await lockJob(tx, shopId, jobId);
    const [last] = await tx
      .select({ position: sql<number>`coalesce(max(${testPoints.position}), 0)::int` })
      .from(testPoints)
      .where(eq(testPoints.jobId, jobId));
    const [row] = await tx
      .insert(testPoints)
      .values({ shopId, jobId, position: (last?.position ?? 0) + 1, ...input })
      .returning(columns);
    return row!;
  });
}

export async function updateTestPoint(db: DbOrTx, shopId: number, id: number, input: TestPointUpdate): Promise<TestPoint> {
  const [row] = await db
    .update(testPoints)
    .set(input)
    .where(and(eq(testPoints.shopId, shopId), eq(testPoints.id, id)))
    .returning(columns);
  if (!row) throw notFound('Test point');
  return row;
}

/** Deletes one test point and closes the gap; captures tagged with it keep their data, untagged. */
export async function deleteTestPoint(db: Db, shopId: number, id: number): Promise<void> {
  await db.transaction(async (tx) => {
    const [found] = await tx
      .select({ jobId: testPoints.jobId })
      .from(testPoints)
      .where(and(eq(testPoints.shopId, shopId), eq(testPoints.id, id)));
    if (!found) throw notFound('Test point');
    await lockJob(tx, shopId, found.jobId);
    await tx.delete(testPoints).where(eq(testPoints.id, id));
    await renumber(tx, (await ordered(tx, found.jobId)).map((t) => t.id));
  });
}

/** Replaces the whole order at once; the list must name every test point of the job once. */
export async function reorderTestPoints(db: Db, shopId: number, jobId: number, ids: number[]): Promise<TestPoint[]> {
  return db.transaction(async (tx) => {
    await lockJob(tx, shopId, jobId);
    const current = new Set((await ordered(tx, jobId)).map((t) => t.id));
    if (ids.length !== current.size || ids.some((id) => !current.has(id))) {
      throw conflict('The new order must list every test point of this job exactly once; reload and try again');
    }
    await renumber(tx, ids);
    return ordered(tx, jobId);
  });
}
