/**
 * Everything the evidence report shows, read in one place: the job, the repair log, the latest
 * before and after capture at each test point with the stored analysis results, the verdicts
 * (shared/compare.ts), the check against the unit's published figures (shared/spec-check.ts) and
 * the technician's sign-off.
 */
import { and, asc, desc, eq } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { analyses, biasReadings, captures, customers, jobEvents, jobs, partsUsed, railChecks, shops, testPoints, units, users } from '../db/schema/index';
import { analysisResultSchema, type AnalysisResult } from '../../shared/analysis-result';
import { captureFiguresSchema, figuresFromResult, type CaptureFigures } from '../../shared/capture-figures';
import { compareFigures, overallVerdict, type FigureComparison, type OverallVerdict } from '../../shared/compare';
import { checkFiguresAgainstSpec, type SpecCheckRow } from '../../shared/spec-check';
import { biasWithin, railCheck } from '../../shared/repair-log';
import { SPEC_METRIC_INFO, checkAgainstSpec, formatSpecValue } from '../../shared/specs';
import { isCrosstalkCapture } from '../../shared/input-crosstalk';
import { notFound } from '../http-error';
import { crosstalkForJob, type JobCrosstalk } from './input-crosstalk';
import { jobReference } from './jobs';
import { sheetForJob } from './measurements';
import { faultCriteria, firstFaultyStage } from '../../shared/signal-path';

export interface EvidenceCapture {
  id: number;
  originalName: string;
  createdAt: Date;
  stimulus: string;
  notes: string;
  engineVersion: string;
  figures: CaptureFigures | null;
  /** Null when the stored JSON does not match the current result schema (an older engine). */
  result: AnalysisResult | null;
}

export interface EvidenceStage {
  position: number;
  name: string;
  description: string;
  before: EvidenceCapture | null;
  after: EvidenceCapture | null;
  rows: FigureComparison[];
  overall: OverallVerdict;
  /** True for the stage where the fault first shows before the repair (signal-path rule). */
  faultFirstShows: boolean;
}

export interface EvidenceData {
  shop: { name: string; address: string; email: string; currency: string };
  job: { id: number; reference: string; status: string; reportedFault: string; faultFound: string; accessories: string; conditionNotes: string; createdAt: Date };
  unit: { kind: string; maker: string; model: string; serial: string };
  customer: { name: string };
  technician: string | null;
  signOff: { by: string | null; at: Date } | null;
  parts: { reference: string; partNumber: string; description: string; quantity: number }[];
  rails: { rail: string; nominalV: number; measuredV: number; tolerancePct: number; deviationPct: number; within: boolean; note: string }[];
  bias: { channel: string; testPoint: string; targetMv: number; toleranceMv: number; finalMv: number | null; within: boolean | null }[];
  stages: EvidenceStage[];
  spec: { sheet: string | null; rows: (SpecCheckRow & { stage: string })[] };
  /** Input crosstalk before and after, when any input-tagged crosstalk capture was measured. */
  crosstalk: JobCrosstalk | null;
  generatedAt: Date;
}

function figuresOf(row: { figures: unknown; result: AnalysisResult | null; loadOhms: number | null }): CaptureFigures | null {
  const stored = captureFiguresSchema.safeParse(row.figures);
  if (stored.success) return stored.data;
  return row.result ? figuresFromResult(row.result, { loadOhms: row.loadOhms }) : null;
}

async function loadStages(db: DbOrTx, shopId: number, jobId: number): Promise<(EvidenceStage & { id: number })[]> {
  const points = await db
    .select()
    .from(testPoints)
    .where(and(eq(testPoints.shopId, shopId), eq(testPoints.jobId, jobId)))
    .orderBy(asc(testPoints.position), asc(testPoints.id));
  const measured = await db
    .select({
      id: captures.id,
      testPointId: captures.testPointId,
      phase: captures.phase,
      stimulus: captures.stimulus,
      selectedInput: captures.selectedInput,
      drivenInput: captures.drivenInput,
      loadOhms: captures.loadOhms,
      originalName: captures.originalName,
      notes: captures.notes,
      createdAt: captures.createdAt,
      engineVersion: analyses.engineVersion,
      figures: analyses.figures,
      result: analyses.result,
    })
    .from(captures)
    .innerJoin(analyses, eq(analyses.captureId, captures.id))
    .where(and(eq(captures.shopId, shopId), eq(captures.jobId, jobId), eq(captures.state, 'done')))
    .orderBy(desc(captures.createdAt), desc(captures.id));
  // Newest first: the first capture seen per test point and phase is the one that counts.
  const latest = new Map<string, EvidenceCapture>();
  for (const m of measured) {
    const key = `${m.testPointId}:${m.phase}`;
    if (latest.has(key) || isCrosstalkCapture(m)) continue;
    const parsed = analysisResultSchema.safeParse(m.result);
    const result = parsed.success ? parsed.data : null;
    latest.set(key, {
      id: m.id,
      originalName: m.originalName,
      createdAt: m.createdAt,
      stimulus: m.stimulus,
      notes: m.notes,
      engineVersion: m.engineVersion,
      result,
      figures: figuresOf({ figures: m.figures, result, loadOhms: m.loadOhms }),
    });
  }
  return points
    .map((p) => {
      const before = latest.get(`${p.id}:before`) ?? null;
      const after = latest.get(`${p.id}:after`) ?? null;
      const rows = compareFigures(before?.figures ?? null, after?.figures ?? null);
      return { id: p.id, position: p.position, name: p.name, description: p.description, before, after, rows, overall: overallVerdict(rows), faultFirstShows: false };
    })
    .filter((s) => s.before || s.after);
}

/** For each published figure, the answer from the after capture furthest along the signal path. */
function specRows(stages: EvidenceStage[], published: Parameters<typeof checkFiguresAgainstSpec>[1]) {
  const out: (SpecCheckRow & { stage: string })[] = [];
  for (const figure of published) {
    let chosen: (SpecCheckRow & { stage: string }) | null = null;
    for (const s of stages) {
      if (!s.after?.figures) continue;
      const [row] = checkFiguresAgainstSpec(s.after.figures, [figure], published);
      if (row && (row.measured !== null || !chosen)) chosen = { ...row, stage: s.name };
    }
    out.push(
      chosen ?? {
        metric: figure.metric,
        label: SPEC_METRIC_INFO[figure.metric].label,
        published: figure.value,
        publishedText: formatSpecValue(figure.metric, figure.value),
        condition: figure.condition,
        source: figure.source,
        measured: null,
        within: null,
        margin: null,
        marginUnit: null,
        note: 'no after-repair measurement yet',
        stage: '',
      },
    );
  }
  return out;
}

/**
 * The published input crosstalk figure is answered by the whole after-repair matrix (its worst
 * pair), not by one capture. A bound counts only when no pair was read outright.
 */
function withCrosstalk(rows: (SpecCheckRow & { stage: string })[], crosstalk: JobCrosstalk): (SpecCheckRow & { stage: string })[] {
  const cells = crosstalk.rows.map((r) => r.after).filter((c): c is NonNullable<typeof c> => c !== null && c.db !== null);
  const read = cells.filter((c) => !c.noiseLimited);
  const pool = read.length ? read : cells;
  const worst = pool.sort((a, b) => (a.db as number) - (b.db as number))[0];
  return rows.map((row) => {
    if (row.metric !== 'input_crosstalk_1k_db') return row;
    if (!worst) return { ...row, note: 'needs the input crosstalk test after the repair' };
    const check = checkAgainstSpec(row.metric, worst.db as number, { metric: row.metric, value: row.published });
    return {
      ...row,
      measured: worst.db,
      // A bound short of the figure says nothing either way.
      within: worst.noiseLimited && !check.within ? null : check.within,
      margin: check.margin,
      marginUnit: check.marginUnit,
      note: `${worst.driven} heard with ${worst.selected} selected, the worst pair${worst.noiseLimited ? '; lost in the noise, so at least this' : ''}`,
      stage: '',
    };
  });
}

/** Marks the stage where the fault first shows before the repair, by the same rule as the signal path. */
function markFaultyStage(stages: (EvidenceStage & { id: number })[], sheet: Awaited<ReturnType<typeof sheetForJob>>): EvidenceStage[] {
  const separation = sheet?.figures.find((f) => f.metric === 'separation_1k_db')?.value ?? null;
  const first = firstFaultyStage(
    stages.map((s) => ({ testPointId: s.id, position: s.position, name: s.name, figures: s.before?.figures ?? null })),
    faultCriteria(separation),
  );
  return stages.map(({ id, ...s }) => ({ ...s, faultFirstShows: first?.testPointId === id }));
}

export async function loadEvidence(db: DbOrTx, shopId: number, jobId: number): Promise<EvidenceData> {
  const [row] = await db
    .select({ job: jobs, unit: units, customerName: customers.name, shop: shops, technician: users.name })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .innerJoin(customers, eq(customers.id, jobs.customerId))
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .leftJoin(users, eq(users.id, jobs.assignedTechnicianId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!row) throw notFound('Job');
  const parts = await db
    .select()
    .from(partsUsed)
    .where(and(eq(partsUsed.shopId, shopId), eq(partsUsed.jobId, jobId)))
    .orderBy(asc(partsUsed.createdAt), asc(partsUsed.id));
  const rails = await db
    .select()
    .from(railChecks)
    .where(and(eq(railChecks.shopId, shopId), eq(railChecks.jobId, jobId)))
    .orderBy(asc(railChecks.createdAt), asc(railChecks.id));
  const bias = await db
    .select()
    .from(biasReadings)
    .where(and(eq(biasReadings.shopId, shopId), eq(biasReadings.jobId, jobId)))
    .orderBy(asc(biasReadings.createdAt), asc(biasReadings.id));
  // Sign-off: the latest move to "ready", by whoever made it.
  const [ready] = await db
    .select({ at: jobEvents.at, by: users.name })
    .from(jobEvents)
    .leftJoin(users, eq(users.id, jobEvents.userId))
    .where(and(eq(jobEvents.shopId, shopId), eq(jobEvents.jobId, jobId), eq(jobEvents.kind, 'status'), eq(jobEvents.toStatus, 'ready')))
    .orderBy(desc(jobEvents.at))
    .limit(1);
  const sheet = await sheetForJob(db, shopId, jobId);
  const stages = markFaultyStage(await loadStages(db, shopId, jobId), sheet);
  const published = sheet?.figures.map((f) => ({ metric: f.metric, value: f.value, condition: f.condition, source: f.source })) ?? [];
  const crosstalk = await crosstalkForJob(db, shopId, jobId);
  const { job, unit, shop } = row;
  const signedOff = ready && ['ready', 'collected'].includes(job.status);
  return {
    shop: { name: shop.name, address: shop.address, email: shop.email, currency: shop.currency },
    job: { id: job.id, reference: jobReference(job.id), status: job.status, reportedFault: job.reportedFault, faultFound: job.faultFound, accessories: job.accessories, conditionNotes: job.conditionNotes, createdAt: job.createdAt },
    unit: { kind: unit.kind, maker: unit.maker, model: unit.model, serial: unit.serial },
    customer: { name: row.customerName },
    technician: row.technician,
    signOff: signedOff ? { by: ready.by, at: ready.at } : null,
    parts: parts.map((p) => ({ reference: p.reference, partNumber: p.partNumber, description: p.description, quantity: p.quantity })),
    rails: rails.map((r) => ({ ...r, ...railCheck(r.nominalV, r.measuredV, r.tolerancePct) })),
    bias: bias.map((b) => ({ channel: b.channel, testPoint: b.testPoint, targetMv: b.targetMv, toleranceMv: b.toleranceMv, finalMv: b.finalMv, within: biasWithin(b.targetMv, b.toleranceMv, b.finalMv) })),
    stages,
    spec: { sheet: sheet ? `${sheet.maker} ${sheet.model}` : null, rows: withCrosstalk(specRows(stages, published), crosstalk) },
    crosstalk: crosstalk.rows.length ? crosstalk : null,
    generatedAt: new Date(),
  };
}
