import { z } from 'zod';
import type { CaptureFigures } from './capture-figures';
import { captureSummarySchema } from './captures';
import { specCheckRowSchema } from './spec-check';

// Before/after comparison of one test point's figures. Each figure has a direction (which way is
// better) and a dead band: a change inside the band is "same", because repeat captures of an
// unchanged unit differ by about that much (probe placement, mains noise, level settling).
// The bands are our working choices for bench captures, not taken from a standard.

export const VERDICTS = ['better', 'same', 'worse', 'changed', 'missing'] as const;
export const verdictSchema = z.enum(VERDICTS);
export type Verdict = z.infer<typeof verdictSchema>;

export type ComparedFigure =
  | 'clickCount'
  | 'separationDb'
  | 'thdPct'
  | 'thdnDb'
  | 'noiseDbfs'
  | 'noiseDbfsA'
  | 'humDbfs'
  | 'levelDbfs';

export interface CompareRule {
  figure: ComparedFigure;
  label: string;
  unit: string;
  /** 'none': a change is reported but is neither better nor worse (a level is set, not judged). */
  better: 'lower' | 'higher' | 'none';
  /** Half-width of the "same" band, in `bandUnit`. */
  deadBand: number;
  bandUnit: string;
  /** THD is judged on its dB value, so the band means the same at 0.01 % and at 1 %. */
  judgeOn: (f: CaptureFigures) => number | null;
  value: (f: CaptureFigures) => number | null;
}

const thdDb = (f: CaptureFigures) => f.thdDb ?? (f.thdPct !== null && f.thdPct > 0 ? 20 * Math.log10(f.thdPct / 100) : null);

export const COMPARE_RULES: readonly CompareRule[] = [
  { figure: 'clickCount', label: 'Clicks', unit: '', better: 'lower', deadBand: 0, bandUnit: 'clicks', judgeOn: (f) => f.clickCount, value: (f) => f.clickCount },
  { figure: 'separationDb', label: 'Channel separation', unit: 'dB', better: 'higher', deadBand: 1, bandUnit: 'dB', judgeOn: (f) => f.separationDb, value: (f) => f.separationDb },
  { figure: 'thdPct', label: 'THD', unit: '%', better: 'lower', deadBand: 0.5, bandUnit: 'dB', judgeOn: thdDb, value: (f) => f.thdPct },
  { figure: 'thdnDb', label: 'THD+N', unit: 'dB', better: 'lower', deadBand: 0.5, bandUnit: 'dB', judgeOn: (f) => f.thdnDb, value: (f) => f.thdnDb },
  { figure: 'noiseDbfs', label: 'Noise, unweighted', unit: 'dBFS', better: 'lower', deadBand: 0.5, bandUnit: 'dB', judgeOn: (f) => f.noiseDbfs, value: (f) => f.noiseDbfs },
  { figure: 'noiseDbfsA', label: 'Noise, A-weighted', unit: 'dBFS', better: 'lower', deadBand: 0.5, bandUnit: 'dB', judgeOn: (f) => f.noiseDbfsA, value: (f) => f.noiseDbfsA },
  { figure: 'humDbfs', label: 'Hum', unit: 'dBFS', better: 'lower', deadBand: 1, bandUnit: 'dB', judgeOn: (f) => f.humDbfs, value: (f) => f.humDbfs },
  { figure: 'levelDbfs', label: 'Level', unit: 'dBFS', better: 'none', deadBand: 0.5, bandUnit: 'dB', judgeOn: (f) => f.levelDbfs, value: (f) => f.levelDbfs },
];

export const figureComparisonSchema = z.object({
  figure: z.string(),
  label: z.string(),
  unit: z.string(),
  before: z.number().nullable(),
  after: z.number().nullable(),
  /** after − before, in the figure's own unit. */
  change: z.number().nullable(),
  verdict: verdictSchema,
  /** The rule in words, e.g. "lower is better; within ±0.5 dB counts as the same". */
  rule: z.string(),
});
export type FigureComparison = z.infer<typeof figureComparisonSchema>;

export function ruleText(rule: CompareRule): string {
  const band = rule.deadBand === 0 ? 'any change counts' : `within ±${rule.deadBand} ${rule.bandUnit} counts as the same`;
  if (rule.better === 'none') return `reported, not judged; ${band}`;
  return `${rule.better} is better; ${band}`;
}

/** Verdict for one pair of values under a rule; pure so it can be tested on its own. */
export function judge(rule: Pick<CompareRule, 'better' | 'deadBand'>, before: number | null, after: number | null): Verdict {
  if (before === null || after === null) return 'missing';
  const delta = after - before;
  if (Math.abs(delta) <= rule.deadBand) return 'same';
  if (rule.better === 'none') return 'changed';
  const improved = rule.better === 'lower' ? delta < 0 : delta > 0;
  return improved ? 'better' : 'worse';
}

/**
 * Side-by-side figures with the change and a verdict each. Figures that neither capture has
 * (THD on two silent captures) are left out; one-sided figures are kept with verdict "missing".
 */
export function compareFigures(before: CaptureFigures | null, after: CaptureFigures | null): FigureComparison[] {
  const out: FigureComparison[] = [];
  for (const rule of COMPARE_RULES) {
    const b = before ? rule.value(before) : null;
    const a = after ? rule.value(after) : null;
    if (b === null && a === null) continue;
    const verdict = judge(rule, before ? rule.judgeOn(before) : null, after ? rule.judgeOn(after) : null);
    out.push({
      figure: rule.figure,
      label: rule.label,
      unit: rule.unit,
      before: b,
      after: a,
      change: a !== null && b !== null ? a - b : null,
      verdict,
      rule: ruleText(rule),
    });
  }
  return out;
}

export const overallVerdictSchema = z.enum(['better', 'worse', 'same', 'mixed', 'missing']);
export type OverallVerdict = z.infer<typeof overallVerdictSchema>;

/** One word for the whole comparison; "mixed" when some figures improved and others got worse. */
export function overallVerdict(rows: FigureComparison[]): OverallVerdict {
  const better = rows.some((r) => r.verdict === 'better');
  const worse = rows.some((r) => r.verdict === 'worse');
  if (better && worse) return 'mixed';
  if (better) return 'better';
  if (worse) return 'worse';
  return rows.some((r) => r.verdict === 'same') ? 'same' : 'missing';
}

const optionalId = z.coerce.number().int().positive().max(2 ** 31 - 1).optional();

/** GET /api/jobs/:id/compare: two capture ids, or one test point (its latest before and after). */
export const compareQuerySchema = z
  .object({ before: optionalId, after: optionalId, testPointId: optionalId })
  .strict()
  .refine((q) => q.testPointId !== undefined || q.before !== undefined || q.after !== undefined, {
    message: 'Choose a before and an after capture to compare, or a test point that has both',
  })
  .refine((q) => q.testPointId === undefined || (q.before === undefined && q.after === undefined), {
    message: 'Give either capture ids or a testPointId, not both',
  });
export type CompareQuery = z.infer<typeof compareQuerySchema>;

export const comparisonSchema = z.object({
  jobId: z.number().int(),
  before: captureSummarySchema.nullable(),
  after: captureSummarySchema.nullable(),
  rows: z.array(figureComparisonSchema),
  overall: overallVerdictSchema,
  spec: z.object({
    sheet: z.object({ id: z.number().int(), maker: z.string(), model: z.string() }).nullable(),
    before: z.array(specCheckRowSchema),
    after: z.array(specCheckRowSchema),
  }),
});
export type Comparison = z.infer<typeof comparisonSchema>;
