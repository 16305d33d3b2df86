import { z } from 'zod';
import { capturePhaseSchema } from './captures';
import type { CaptureFigures } from './capture-figures';
import { TRADE_MINIMUM_CROSSTALK_DB } from './input-crosstalk';

// The signal-path table: each test point in order with its latest figures, and the first stage
// where the fault shows. A stage is faulty when it has clicks, or when its channel separation is
// below the unit's published figure, or — with no spec sheet figure — below 50 dB, or when another
// input is heard through the selected one less far down than the published input crosstalk
// figure (or the 40 dB trade minimum, see input-crosstalk.ts).
// 50 dB is trade practice for a healthy line stage (no standard sets it; the historic DIN 45500
// minimum for crosstalk at 1 kHz was 40 dB, and sound units today publish far more).

export const TRADE_SEPARATION_THRESHOLD_DB = 50;

export const faultCriteriaSchema = z.object({
  separationThresholdDb: z.number(),
  separationSource: z.enum(['spec_sheet', 'trade_practice']),
  /** Input crosstalk below this marks a stage; optional for tables made before it was added. */
  crosstalkThresholdDb: z.number().optional(),
  crosstalkSource: z.enum(['spec_sheet', 'trade_minimum']).optional(),
  note: z.string(),
});
export type FaultCriteria = z.infer<typeof faultCriteriaSchema>;

export function faultCriteria(specSeparationDb: number | null, specCrosstalkDb: number | null = null): FaultCriteria {
  const crosstalk = {
    crosstalkThresholdDb: specCrosstalkDb ?? TRADE_MINIMUM_CROSSTALK_DB,
    crosstalkSource: specCrosstalkDb !== null ? ('spec_sheet' as const) : ('trade_minimum' as const),
  };
  const crosstalkNote =
    specCrosstalkDb !== null
      ? ` Another input heard less than the sheet's ${specCrosstalkDb} dB below the selected one does too.`
      : ` Another input heard less than ${TRADE_MINIMUM_CROSSTALK_DB} dB below the selected one does too (the long-standing hi-fi minimum).`;
  if (specSeparationDb !== null) {
    return {
      separationThresholdDb: specSeparationDb,
      separationSource: 'spec_sheet',
      ...crosstalk,
      note: `Channel separation below the ${specSeparationDb} dB on the unit's spec sheet, or any click, marks a stage as faulty.${crosstalkNote}`,
    };
  }
  return {
    separationThresholdDb: TRADE_SEPARATION_THRESHOLD_DB,
    separationSource: 'trade_practice',
    ...crosstalk,
    note: `No separation figure on a spec sheet for this unit: ${TRADE_SEPARATION_THRESHOLD_DB} dB is used (trade practice, not a standard). Any click also marks a stage as faulty.${crosstalkNote}`,
  };
}

/** A stage's worst input crosstalk in one phase: the loudest other input heard through the selected one. */
export const stageCrosstalkSchema = z.object({
  driven: z.string(),
  selected: z.string(),
  db: z.number(),
  /** True when the figure is a bound (the leak is lost in the noise). */
  noiseLimited: z.boolean(),
});
export type StageCrosstalk = z.infer<typeof stageCrosstalkSchema>;

function crosstalkFault(x: StageCrosstalk | null | undefined, criteria: FaultCriteria): StageFault | null {
  const limit = criteria.crosstalkThresholdDb;
  if (!x || limit === undefined || x.noiseLimited || x.db >= limit) return null;
  return { kind: 'crosstalk', message: `${x.driven} heard ${x.db.toFixed(1)} dB below the selected ${x.selected} input, less than ${limit} dB` };
}

export const stageFaultSchema = z.object({
  kind: z.enum(['clicks', 'separation', 'crosstalk']),
  message: z.string(),
});
export type StageFault = z.infer<typeof stageFaultSchema>;

/** Why a stage's figures count as faulty; empty when they do not. */
export function stageFaults(figures: CaptureFigures | null, criteria: FaultCriteria, crosstalk: StageCrosstalk | null = null): StageFault[] {
  const faults: StageFault[] = [];
  const leak = crosstalkFault(crosstalk, criteria);
  if (!figures) return leak ? [leak] : [];
  if (figures.clickCount > 0) {
    const rate = figures.clicksPerMinute.toFixed(1);
    faults.push({ kind: 'clicks', message: `${figures.clickCount} click${figures.clickCount === 1 ? '' : 's'} (${rate} per minute)` });
  }
  // A noise-limited separation is only a lower bound: the real figure may be fine.
  if (figures.separationDb !== null && !figures.separationNoiseLimited && figures.separationDb < criteria.separationThresholdDb) {
    faults.push({
      kind: 'separation',
      message: `separation ${figures.separationDb.toFixed(1)} dB, below ${criteria.separationThresholdDb} dB`,
    });
  }
  if (leak) faults.push(leak);
  return faults;
}

export interface StageInput {
  testPointId: number;
  position: number;
  name: string;
  figures: CaptureFigures | null;
  crosstalk?: StageCrosstalk | null;
}

export const firstFaultSchema = z.object({
  testPointId: z.number().int(),
  name: z.string(),
  position: z.number().int(),
  faults: z.array(stageFaultSchema),
  /** Measured stages before it that were clean: how well the fault is pinned down. */
  cleanStagesBefore: z.number().int(),
});
export type FirstFault = z.infer<typeof firstFaultSchema>;

/** The first stage, in signal order, whose figures are faulty; unmeasured stages are skipped. */
export function firstFaultyStage(stages: StageInput[], criteria: FaultCriteria): FirstFault | null {
  const ordered = [...stages].sort((a, b) => a.position - b.position || a.testPointId - b.testPointId);
  let clean = 0;
  for (const s of ordered) {
    if (!s.figures && !s.crosstalk) continue;
    const faults = stageFaults(s.figures, criteria, s.crosstalk ?? null);
    if (faults.length > 0) return { testPointId: s.testPointId, name: s.name, position: s.position, faults, cleanStagesBefore: clean };
    clean++;
  }
  return null;
}

export const stageCaptureSchema = z.object({
  captureId: z.number().int(),
  originalName: z.string(),
  createdAt: z.string(),
  stimulus: z.string(),
  clickCount: z.number().int(),
  clicksPerMinute: z.number(),
  separationDb: z.number().nullable(),
  separationNoiseLimited: z.boolean(),
  thdPct: z.number().nullable(),
  noiseDbfsA: z.number().nullable(),
  faults: z.array(stageFaultSchema),
});
export type StageCapture = z.infer<typeof stageCaptureSchema>;

export const signalPathRowSchema = z.object({
  testPointId: z.number().int(),
  position: z.number().int(),
  name: z.string(),
  description: z.string(),
  before: stageCaptureSchema.nullable(),
  after: stageCaptureSchema.nullable(),
  /** Worst input crosstalk measured at this point, per phase. */
  crosstalk: z.object({ before: stageCrosstalkSchema.nullable(), after: stageCrosstalkSchema.nullable() }),
});
export type SignalPathRow = z.infer<typeof signalPathRowSchema>;

export const signalPathSchema = z.object({
  jobId: z.number().int(),
  criteria: faultCriteriaSchema,
  rows: z.array(signalPathRowSchema),
  firstFault: z.record(capturePhaseSchema, firstFaultSchema.nullable()),
});
export type SignalPath = z.infer<typeof signalPathSchema>;
