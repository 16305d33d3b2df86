import { and, eq } from 'drizzle-orm';
import { compareCrosstalk, type JobCrosstalk } from '../../shared/input-crosstalk-compare';
import type { DbOrTx } from '../db/client';
import { jobs, units } from '../db/schema/index';
import { notFound } from '../http-error';
import { listCaptures } from './captures';
import { unitInputs } from './customers';
import { sheetForJob } from './measurements';

export type { JobCrosstalk };

/** The job's input crosstalk before and after the repair, from its measured, input-tagged captures. */
export async function crosstalkForJob(db: DbOrTx, shopId: number, jobId: number): Promise<JobCrosstalk> {
  const [unit] = await db
    .select({ kind: units.kind, inputs: units.inputs })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!unit) throw notFound('Job');
  const inputs = unitInputs(unit.kind, unit.inputs);
  const sheet = await sheetForJob(db, shopId, jobId);
  const figure = sheet?.figures.find((f) => f.metric === 'input_crosstalk_1k_db') ?? null;
  const measured = (await listCaptures(db, shopId, jobId)).filter((c) => c.state === 'done' && c.figures?.tone);
  const comparison = compareCrosstalk({
    captures: measured.map((c) => ({ id: c.id, phase: c.phase, selectedInput: c.selectedInput, drivenInput: c.drivenInput, createdAt: c.createdAt, tone: c.figures!.tone })),
    inputOrder: inputs,
    publishedDb: figure?.value ?? null,
  });
  return { ...comparison, inputs, published: figure ? { value: figure.value, condition: figure.condition, source: figure.source } : null };
}
