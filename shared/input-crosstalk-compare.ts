import { z } from 'zod';
import {
  buildCrosstalkMatrix,
  crosstalkVerdict,
  TRADE_MINIMUM_CROSSTALK_DB,
  worstCell,
  type CrosstalkCapture,
  type CrosstalkCell,
  type CrosstalkMatrix,
  type CrosstalkVerdict,
} from './input-crosstalk';
import { inputKey } from './inputs';

// Input crosstalk before and after the repair, pair by pair (driven, selected), each side judged
// against the spec sheet's published input crosstalk figure, or the trade minimum without one.

export const crosstalkLimitSourceSchema = z.enum(['spec_sheet', 'trade_minimum']);
export type CrosstalkLimitSource = z.infer<typeof crosstalkLimitSourceSchema>;

export interface CrosstalkPairRow {
  driven: string;
  selected: string;
  /** The worse channel on each side. */
  before: CrosstalkCell | null;
  after: CrosstalkCell | null;
  beforeVerdict: CrosstalkVerdict | null;
  afterVerdict: CrosstalkVerdict | null;
  /** After minus before, dB (positive = the other input is now heard less); null when either is a bound or missing. */
  changeDb: number | null;
}

export interface CrosstalkComparison {
  limitDb: number;
  limitSource: CrosstalkLimitSource;
  before: CrosstalkMatrix;
  after: CrosstalkMatrix;
  rows: CrosstalkPairRow[];
  /** One plain sentence on the worst pair, for the customer; null when nothing was measured. */
  sentence: string | null;
}

const enteredLevelsSchema = z.record(z.string().trim().min(1).max(40), z.number().finite().min(-200).max(20));
/**
 * Levels the technician typed in for driven inputs that have no capture of their own, per phase:
 * input name → dBFS at the same probe. PUT /api/jobs/:id/input-crosstalk/references.
 */
export const crosstalkReferencesSchema = z
  .object({ before: enteredLevelsSchema.default({}), after: enteredLevelsSchema.default({}) })
  .strict();
export type CrosstalkReferences = z.infer<typeof crosstalkReferencesSchema>;

/** GET /api/jobs/:id/input-crosstalk */
export interface JobCrosstalk extends CrosstalkComparison {
  /** Reference levels entered for inputs without their own capture. */
  entered: CrosstalkReferences;
  /** The unit's inputs, in selector order. */
  inputs: string[];
  /** The spec sheet's published input crosstalk figure, when it has one. */
  published: { value: number; condition: string; source: string } | null;
}

/** "Disc" → "disc" inside a sentence; names in capitals ("MM", "CD") stay as they are. */
function inSentence(name: string): string {
  return name === name.toUpperCase() ? name : name.charAt(0).toLowerCase() + name.slice(1);
}
const capital = (name: string) => name.charAt(0).toUpperCase() + name.slice(1);
const round = (db: number) => String(Math.round(db));

/** The sentence for one pair, e.g. "Tuner is now heard 71 dB below the selected disc input; before the repair it was 29 dB below." */
export function crosstalkSentence(row: Pick<CrosstalkPairRow, 'driven' | 'selected' | 'before' | 'after'>): string | null {
  const who = capital(row.driven);
  const where = `the selected ${inSentence(row.selected)} input`;
  const level = (c: CrosstalkCell) => (c.db === null ? null : `${c.noiseLimited ? 'more than ' : ''}${round(c.db)} dB below`);
  const after = row.after ? level(row.after) : null;
  const before = row.before ? level(row.before) : null;
  const quiet = row.after && row.after.noiseLimited ? ', too quiet to measure exactly' : '';
  if (after && before) return `${who} is now heard ${after} ${where}${quiet}; before the repair it was ${before}.`;
  if (after) return `${who} is heard ${after} ${where}${quiet}.`;
  if (before) return `Before the repair ${inSentence(row.driven)} was heard ${before} ${where}; it has not been measured since.`;
  return null;
}

export function compareCrosstalk(options: {
  captures: CrosstalkCapture[];
  inputOrder?: readonly string[];
  /** The spec sheet's published input crosstalk figure, dB, when it has one. */
  publishedDb?: number | null;
  enteredReferenceDbfs?: { before?: Readonly<Record<string, number>>; after?: Readonly<Record<string, number>> };
}): CrosstalkComparison {
  const { captures, inputOrder = [], publishedDb = null, enteredReferenceDbfs = {} } = options;
  const limitDb = publishedDb ?? TRADE_MINIMUM_CROSSTALK_DB;
  const before = buildCrosstalkMatrix({ captures, phase: 'before', inputOrder, enteredReferenceDbfs: enteredReferenceDbfs.before });
  const after = buildCrosstalkMatrix({ captures, phase: 'after', inputOrder, enteredReferenceDbfs: enteredReferenceDbfs.after });
  const pairs = new Map<string, { driven: string; selected: string }>();
  for (const m of [before, after]) for (const c of m.cells) pairs.set(`${inputKey(c.driven)}\u0000${inputKey(c.selected)}`, { driven: c.driven, selected: c.selected });
  const rank = (n: string) => {
    const i = inputOrder.findIndex((o) => inputKey(o) === inputKey(n));
    return i < 0 ? inputOrder.length : i;
  };
  const rows: CrosstalkPairRow[] = [...pairs.values()]
    .sort((a, b) => rank(a.driven) - rank(b.driven) || rank(a.selected) - rank(b.selected))
    .map(({ driven, selected }) => {
      const b = worstCell(before, driven, selected);
      const a = worstCell(after, driven, selected);
      return {
        driven,
        selected,
        before: b,
        after: a,
        beforeVerdict: crosstalkVerdict(b, limitDb),
        afterVerdict: crosstalkVerdict(a, limitDb),
        changeDb: a && b && a.db !== null && b.db !== null && !b.noiseLimited && !a.noiseLimited ? a.db - b.db : null,
      };
    });
  // The sentence tells of the pair that was worst before the repair (the loudest leak), else the worst after.
  const worst = (side: 'before' | 'after') =>
    rows.filter((r) => r[side]?.db != null).sort((x, y) => (x[side]!.db as number) - (y[side]!.db as number))[0] ?? null;
  const lead = worst('before') ?? worst('after');
  return {
    limitDb,
    limitSource: publishedDb === null ? 'trade_minimum' : 'spec_sheet',
    before,
    after,
    rows,
    sentence: lead ? crosstalkSentence(lead) : null,
  };
}

export type CrosstalkPairVerdict = 'fixed' | 'meets' | 'short' | 'still_short' | 'unknown' | 'not_after';
export const CROSSTALK_PAIR_VERDICT_LABELS: Record<CrosstalkPairVerdict, string> = {
  fixed: 'Fixed',
  meets: 'Meets the limit',
  short: 'Short of the limit',
  still_short: 'Still short',
  unknown: 'Lost in the noise',
  not_after: 'Not measured after',
};

/** One word for a pair, reading the after side first, since that is the unit as it leaves. */
export function pairVerdict(row: Pick<CrosstalkPairRow, 'beforeVerdict' | 'afterVerdict'>): CrosstalkPairVerdict {
  const { beforeVerdict: b, afterVerdict: a } = row;
  if (a === null) return 'not_after';
  if (a === 'meets') return b === 'short' ? 'fixed' : 'meets';
  if (a === 'short') return b === 'short' ? 'still_short' : 'short';
  return 'unknown';
}

/** Where the limit comes from, in plain words. */
export function limitText(c: Pick<CrosstalkComparison, 'limitDb' | 'limitSource'>): string {
  return c.limitSource === 'spec_sheet'
    ? `the published figure of ${c.limitDb} dB`
    : `${c.limitDb} dB, the long-standing minimum for hi-fi amplifiers (no published figure on file)`;
}
