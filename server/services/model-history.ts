import { and, asc, desc, eq, inArray, ne, sql, type SQL } from 'drizzle-orm';
import type { AnyPgColumn } from 'drizzle-orm/pg-core';
import type { DbOrTx } from '../db/client';
import { analyses, biasReadings, captures, jobs, partsUsed, railChecks, testPoints, units } from '../db/schema/index';
import { modelKeySql } from '../db/schema/search-columns';
import { summariseHistory, type HistoryJob, type ModelHistory } from '../../shared/model-history';
import { jobReference } from './jobs';
import { notFound } from '../http-error';

/** How many earlier jobs the history shows; the newest first. */
const HISTORY_LIMIT = 25;

function groupBy<T extends { jobId: number }>(rows: T[]): Map<number, Omit<T, 'jobId'>[]> {
  const out = new Map<number, Omit<T, 'jobId'>[]>();
  for (const { jobId, ...rest } of rows) {
    const list = out.get(jobId) ?? [];
    list.push(rest);
    out.set(jobId, list);
  }
  return out;
}

/**
 * Earlier jobs in the shop on units whose maker and model match the key (case, spacing and
 * punctuation aside), with what was found, replaced and measured on each.
 */
async function historyForKey(db: DbOrTx, shopId: number, key: SQL, excludeJobId: number | null): Promise<ModelHistory> {
  const found = await db
    .select({
      jobId: jobs.id,
      status: jobs.status,
      createdAt: jobs.createdAt,
      maker: units.maker,
      model: units.model,
      serial: units.serial,
      reportedFault: jobs.reportedFault,
      faultFound: jobs.faultFound,
    })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(units.shopId, shopId), eq(jobs.shopId, shopId), sql`${units.modelKey} = ${key}`, excludeJobId ? ne(jobs.id, excludeJobId) : undefined))
    .orderBy(desc(jobs.createdAt), desc(jobs.id))
    .limit(HISTORY_LIMIT);
  if (found.length === 0) return { summary: summariseHistory([]), jobs: [] };
  const ids = found.map((j) => j.jobId);
  const mine = (t: { shopId: AnyPgColumn; jobId: AnyPgColumn }) => and(eq(t.shopId, shopId), inArray(t.jobId, ids));
  const [parts, rails, bias, after] = await Promise.all([
    db
      .select({ jobId: partsUsed.jobId, reference: partsUsed.reference, partNumber: partsUsed.partNumber, description: partsUsed.description, quantity: partsUsed.quantity })
      .from(partsUsed)
      .where(mine(partsUsed))
      .orderBy(asc(partsUsed.id)),
    db
      .select({ jobId: railChecks.jobId, rail: railChecks.rail, nominalV: railChecks.nominalV, measuredV: railChecks.measuredV, tolerancePct: railChecks.tolerancePct })
      .from(railChecks)
      .where(mine(railChecks))
      .orderBy(asc(railChecks.id)),
    db
      .select({
        jobId: biasReadings.jobId,
        channel: biasReadings.channel,
        testPoint: biasReadings.testPoint,
        targetMv: biasReadings.targetMv,
        toleranceMv: biasReadings.toleranceMv,
        coldMv: biasReadings.coldMv,
        finalMv: biasReadings.finalMv,
      })
      .from(biasReadings)
      .where(mine(biasReadings))
      .orderBy(asc(biasReadings.id)),
    db
      .select({
        jobId: captures.jobId,
        testPointName: testPoints.name,
        stimulus: captures.stimulus,
        thdPct: analyses.thdPct,
        noiseDbfsA: analyses.noiseDbfsA,
        separationDb: analyses.separationDb,
        clickCount: analyses.clickCount,
      })
      .from(captures)
      .innerJoin(analyses, eq(analyses.captureId, captures.id))
      .leftJoin(testPoints, eq(testPoints.id, captures.testPointId))
      .where(and(mine(captures), eq(captures.phase, 'after'), eq(captures.state, 'done')))
      .orderBy(asc(testPoints.position), asc(captures.id)),
  ]);
  const byJob = { parts: groupBy(parts), rails: groupBy(rails), bias: groupBy(bias), after: groupBy(after) };
  const history: HistoryJob[] = found.map((j) => ({
    ...j,
    reference: jobReference(j.jobId),
    createdAt: j.createdAt.toISOString(),
    parts: byJob.parts.get(j.jobId) ?? [],
    rails: byJob.rails.get(j.jobId) ?? [],
    bias: byJob.bias.get(j.jobId) ?? [],
    afterFigures: byJob.after.get(j.jobId) ?? [],
  }));
  return { summary: summariseHistory(history), jobs: history };
}

/** History for a maker and model typed at intake, before the unit exists. */
export function historyForModel(db: DbOrTx, shopId: number, maker: string, model: string): Promise<ModelHistory> {
  return historyForKey(db, shopId, modelKeySql(maker, model), null);
}

/** History for a job's unit: the shop's other jobs on the same model. */
export async function historyForJob(db: DbOrTx, shopId: number, jobId: number): Promise<ModelHistory> {
  const [row] = await db
    .select({ key: units.modelKey })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!row) throw notFound('Job');
  return historyForKey(db, shopId, sql`${row.key}`, jobId);
}
