import { z } from 'zod';

// Model history: what the shop learnt on earlier units of the same maker and model.

/**
 * The match key for a maker and model: lower case, letters and digits only, maker and model kept
 * apart. Mirrors the SQL of the stored units.model_key column (server/db/schema/search-columns.ts).
 */
export function modelKey(maker: string, model: string): string {
  const squash = (s: string) => s.toLowerCase().replace(/[^\p{L}\p{N}]+/gu, '');
  return `${squash(maker)}|${squash(model)}`;
}

export const modelHistoryQuerySchema = z.object({
  maker: z.string().trim().min(1, 'Give the maker').max(200),
  model: z.string().trim().min(1, 'Give the model').max(200),
});
export type ModelHistoryQuery = z.infer<typeof modelHistoryQuerySchema>;

export const historyPartSchema = z.object({ reference: z.string(), partNumber: z.string(), description: z.string(), quantity: z.number().int() });
export const historyRailSchema = z.object({ rail: z.string(), nominalV: z.number(), measuredV: z.number(), tolerancePct: z.number() });
export const historyBiasSchema = z.object({
  channel: z.string(),
  testPoint: z.string(),
  targetMv: z.number(),
  toleranceMv: z.number(),
  coldMv: z.number().nullable(),
  finalMv: z.number().nullable(),
});
export const historyAfterFigureSchema = z.object({
  testPointName: z.string().nullable(),
  stimulus: z.string(),
  thdPct: z.number().nullable(),
  noiseDbfsA: z.number().nullable(),
  separationDb: z.number().nullable(),
  clickCount: z.number().int().nullable(),
});

export const historyJobSchema = z.object({
  jobId: z.number().int(),
  reference: z.string(),
  status: z.string(),
  createdAt: z.string(),
  maker: z.string(),
  model: z.string(),
  serial: z.string(),
  reportedFault: z.string(),
  faultFound: z.string(),
  parts: z.array(historyPartSchema),
  rails: z.array(historyRailSchema),
  bias: z.array(historyBiasSchema),
  afterFigures: z.array(historyAfterFigureSchema),
});
export type HistoryJob = z.infer<typeof historyJobSchema>;

export const modelHistorySchema = z.object({ summary: z.string(), jobs: z.array(historyJobSchema) });
export type ModelHistory = z.infer<typeof modelHistorySchema>;

const partLabel = (p: { reference: string; description: string; partNumber: string }) =>
  (p.description || p.partNumber || p.reference).trim();

/**
 * One line for the top of the history: how many earlier units, and the part replaced on most of
 * them ("3 earlier units: input selector switch IC replaced on 2"). Parts are counted once per
 * job, grouped by description without regard to case; the spelling shown is the newest job's (jobs come newest first).
 */
export function summariseHistory(jobs: Pick<HistoryJob, 'parts'>[]): string {
  if (jobs.length === 0) return 'No earlier units of this model in this shop';
  const units = `${jobs.length} earlier unit${jobs.length === 1 ? '' : 's'}`;
  const counts = new Map<string, { label: string; jobs: number; refs: Set<string> }>();
  for (const job of jobs) {
    const seen = new Set<string>();
    for (const p of job.parts) {
      const label = partLabel(p);
      const key = label.toLowerCase();
      if (!key) continue;
      const entry = counts.get(key) ?? { label, jobs: 0, refs: new Set<string>() };
      if (!seen.has(key)) entry.jobs += 1;
      seen.add(key);
      if (p.reference) entry.refs.add(p.reference);
      counts.set(key, entry);
    }
  }
  const top = [...counts.values()].sort((a, b) => b.jobs - a.jobs || a.label.localeCompare(b.label))[0];
  if (!top) return `${units}: no parts recorded`;
  const refs = top.refs.size ? ` (${[...top.refs].sort().join(', ')})` : '';
  return `${units}: ${top.label}${refs} replaced on ${top.jobs}`;
}
