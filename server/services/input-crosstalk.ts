import { and, eq } from 'drizzle-orm';
import { compareCrosstalk, type CrosstalkReferences, type JobCrosstalk } from '../../shared/input-crosstalk-compare';
import { matchInput } from '../../shared/inputs';
import type { DbOrTx } from '../db/client';
import { jobs, units } from '../db/schema/index';
import { badRequest, notFound } from '../http-error';
import { listCaptures } from './captures';
import { unitInputs } from './customers';
import { sheetForJob } from './measurements';

export type { JobCrosstalk };

async function jobUnit(db: DbOrTx, shopId: number, jobId: number) {
  const [row] = await db
    .select({ kind: units.kind, inputs: units.inputs, entered: jobs.crosstalkReferences })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!row) throw notFound('Job');
  return { inputs: unitInputs(row.kind, row.inputs), entered: row.entered };
}

/** The job's input crosstalk before and after the repair, from its measured, input-tagged captures. */
export async function crosstalkForJob(db: DbOrTx, shopId: number, jobId: number): Promise<JobCrosstalk> {
  const { inputs, entered } = await jobUnit(db, shopId, jobId);
  const sheet = await sheetForJob(db, shopId, jobId);
  const figure = sheet?.figures.find((f) => f.metric === 'input_crosstalk_1k_db') ?? null;
  const measured = (await listCaptures(db, shopId, jobId)).filter((c) => c.state === 'done' && c.figures?.tone);
  const comparison = compareCrosstalk({
    captures: measured.map((c) => ({ id: c.id, phase: c.phase, selectedInput: c.selectedInput, drivenInput: c.drivenInput, createdAt: c.createdAt, tone: c.figures!.tone })),
    inputOrder: inputs,
    publishedDb: figure?.value ?? null,
    enteredReferenceDbfs: entered,
  });
  return { ...comparison, inputs, entered, published: figure ? { value: figure.value, condition: figure.condition, source: figure.source } : null };
}

/** Stores the typed-in reference levels, names in the unit's spelling; an unknown input is refused. */
export async function setCrosstalkReferences(db: DbOrTx, shopId: number, jobId: number, levels: CrosstalkReferences): Promise<void> {
  const { inputs } = await jobUnit(db, shopId, jobId);
  const canonical = (side: Record<string, number>) =>
    Object.fromEntries(
      Object.entries(side).map(([name, dbfs]) => {
        const found = matchInput(inputs, name);
        if (!found) throw badRequest(`"${name}" is not one of this unit's inputs (${inputs.join(', ')})`);
        return [found, dbfs];
      }),
    );
  await db
    .update(jobs)
    .set({ crosstalkReferences: { before: canonical(levels.before), after: canonical(levels.after) } })
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
}
