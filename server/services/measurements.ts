import { and, asc, desc, eq, isNull, or, sql } from 'drizzle-orm';
import type { CaptureSummary } from '../../shared/captures';
import type { CaptureFigures } from '../../shared/capture-figures';
import { compareFigures, overallVerdict, type Comparison } from '../../shared/compare';
import { faultCriteria, firstFaultyStage, stageFaults, type SignalPath, type StageCapture, type StageCrosstalk } from '../../shared/signal-path';
import { checkFiguresAgainstSpec } from '../../shared/spec-check';
import { buildCrosstalkMatrix, isCrosstalkCapture, worstOfMatrix } from '../../shared/input-crosstalk';
import type { SpecSheet } from '../../shared/specs';
import type { DbOrTx } from '../db/client';
import { captures, jobs, testPoints } from '../db/schema/index';
import { HttpError, badRequest, notFound } from '../http-error';
import { getCaptures, listCaptures } from './captures';
import { sheetForUnit } from './spec-sheets';

/** The spec sheet matching the job's unit, or null when the shop has none for that model. */
export async function sheetForJob(db: DbOrTx, shopId: number, jobId: number): Promise<SpecSheet | null> {
  const [job] = await db.select({ unitId: jobs.unitId }).from(jobs).where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!job) throw notFound('Job');
  try {
    return await sheetForUnit(db, shopId, job.unitId);
  } catch (err) {
    if (err instanceof HttpError && err.status === 404) return null;
    throw err;
  }
}

const separationSpec = (sheet: SpecSheet | null) => sheet?.figures.find((f) => f.metric === 'separation_1k_db')?.value ?? null;
const crosstalkSpec = (sheet: SpecSheet | null) => sheet?.figures.find((f) => f.metric === 'input_crosstalk_1k_db')?.value ?? null;

/** The worst input crosstalk at one test point in one phase, from all the job's tagged captures. */
function stageCrosstalk(all: CaptureSummary[], testPointId: number, phase: 'before' | 'after'): StageCrosstalk | null {
  const here = all
    .filter((c) => c.testPointId === testPointId && c.figures?.tone)
    .map((c) => ({ id: c.id, phase: c.phase, selectedInput: c.selectedInput, drivenInput: c.drivenInput, createdAt: c.createdAt, tone: c.figures!.tone }));
  const worst = worstOfMatrix(buildCrosstalkMatrix({ captures: here, phase }));
  return worst && worst.db !== null ? { driven: worst.driven, selected: worst.selected, db: worst.db, noiseLimited: worst.noiseLimited } : null;
}

function stageCapture(c: CaptureSummary, figures: CaptureFigures, criteria: ReturnType<typeof faultCriteria>, crosstalk: StageCrosstalk | null): StageCapture {
  return {
    captureId: c.id,
    originalName: c.originalName,
    createdAt: c.createdAt,
    stimulus: c.stimulus,
    clickCount: figures.clickCount,
    clicksPerMinute: figures.clicksPerMinute,
    separationDb: figures.separationDb,
    separationNoiseLimited: figures.separationNoiseLimited,
    thdPct: figures.thdPct,
    noiseDbfsA: figures.noiseDbfsA,
    faults: stageFaults(figures, criteria, crosstalk),
  };
}

/** Each test point in signal order with its latest measured capture per phase, and where the fault first shows. */
export async function signalPathForJob(db: DbOrTx, shopId: number, jobId: number): Promise<SignalPath> {
  const sheet = await sheetForJob(db, shopId, jobId);
  const criteria = faultCriteria(separationSpec(sheet), crosstalkSpec(sheet));
  const points = await db
    .select({ id: testPoints.id, position: testPoints.position, name: testPoints.name, description: testPoints.description })
    .from(testPoints)
    .where(and(eq(testPoints.shopId, shopId), eq(testPoints.jobId, jobId)))
    .orderBy(asc(testPoints.position), asc(testPoints.id));
  // Newest first, so the first one seen per test point and phase is the latest.
  const done = (await listCaptures(db, shopId, jobId)).filter((c) => c.state === 'done' && c.figures !== null);
  // Another input heard through the selected one is the crosstalk matrix's, not the stage's own signal.
  const measured = done.filter((c) => !isCrosstalkCapture(c));
  const latest = new Map<string, CaptureSummary>();
  for (const c of measured) {
    const key = `${c.testPointId}:${c.phase}`;
    if (!latest.has(key)) latest.set(key, c);
  }
  const crosstalk = new Map(points.flatMap((p) => (['before', 'after'] as const).map((phase) => [`${p.id}:${phase}`, stageCrosstalk(done, p.id, phase)] as const)));
  const rows = points.map((p) => {
    const pick = (phase: 'before' | 'after') => {
      const c = latest.get(`${p.id}:${phase}`);
      return c && c.figures ? stageCapture(c, c.figures, criteria, crosstalk.get(`${p.id}:${phase}`) ?? null) : null;
    };
    return {
      testPointId: p.id,
      position: p.position,
      name: p.name,
      description: p.description,
      before: pick('before'),
      after: pick('after'),
      crosstalk: { before: crosstalk.get(`${p.id}:before`) ?? null, after: crosstalk.get(`${p.id}:after`) ?? null },
    };
  });
  const firstFor = (phase: 'before' | 'after') =>
    firstFaultyStage(
      points.map((p) => ({
        testPointId: p.id,
        position: p.position,
        name: p.name,
        figures: latest.get(`${p.id}:${phase}`)?.figures ?? null,
        crosstalk: crosstalk.get(`${p.id}:${phase}`) ?? null,
      })),
      criteria,
    );
  return { jobId, criteria, rows, firstFault: { before: firstFor('before'), after: firstFor('after') } };
}

/** Not a crosstalk capture: no inputs said, or the same one selected and driven (SQL of isCrosstalkCapture). */
const ownSignal = or(isNull(captures.selectedInput), isNull(captures.drivenInput), sql`lower(${captures.selectedInput}) = lower(${captures.drivenInput})`);

/** The newest measured before and after captures at one test point. */
async function latestPair(db: DbOrTx, shopId: number, jobId: number, testPointId: number): Promise<{ before: number | null; after: number | null }> {
  const [tp] = await db.select({ id: testPoints.id }).from(testPoints).where(and(eq(testPoints.shopId, shopId), eq(testPoints.jobId, jobId), eq(testPoints.id, testPointId)));
  if (!tp) throw badRequest(`Test point ${testPointId} is not on this job`);
  const pick = async (phase: 'before' | 'after') => {
    const [row] = await db
      .select({ id: captures.id })
      .from(captures)
      .where(and(eq(captures.shopId, shopId), eq(captures.jobId, jobId), eq(captures.testPointId, testPointId), eq(captures.phase, phase), eq(captures.state, 'done'), ownSignal))
      .orderBy(desc(captures.createdAt), desc(captures.id))
      .limit(1);
    return row?.id ?? null;
  };
  return { before: await pick('before'), after: await pick('after') };
}

/**
 * Before/after figures side by side, by capture ids or by test point (its latest pair), with the
 * spec check of each side against the unit's published figures.
 */
export async function compareForJob(
  db: DbOrTx,
  shopId: number,
  jobId: number,
  query: { before?: number; after?: number; testPointId?: number },
): Promise<Comparison> {
  let ids = { before: query.before ?? null, after: query.after ?? null };
  if (query.testPointId !== undefined) ids = await latestPair(db, shopId, jobId, query.testPointId);
  const [before, after] = await Promise.all(
    [ids.before, ids.after].map(async (id) => {
      if (id === null) return null;
      const [c] = await getCaptures(db, shopId, [id]);
      if (!c || c.jobId !== jobId) throw badRequest(`Capture ${id} is not on this job`);
      return c;
    }),
  );
  if (!before && !after) throw badRequest('Choose a before capture, an after capture, or a test point that has them');
  const sheet = await sheetForJob(db, shopId, jobId);
  const published = sheet?.figures.map((f) => ({ metric: f.metric, value: f.value, condition: f.condition, source: f.source })) ?? [];
  const rows = compareFigures(before?.figures ?? null, after?.figures ?? null);
  return {
    jobId,
    before: before ?? null,
    after: after ?? null,
    rows,
    overall: overallVerdict(rows),
    spec: {
      sheet: sheet ? { id: sheet.id, maker: sheet.maker, model: sheet.model } : null,
      before: before?.figures ? checkFiguresAgainstSpec(before.figures, published) : [],
      after: after?.figures ? checkFiguresAgainstSpec(after.figures, published) : [],
    },
  };
}
