import { z } from 'zod';

// Shop search: one box over jobs, customers, units, serials, fault text and notes.

export const searchQuerySchema = z.object({
  q: z.string().trim().min(1, 'Type something to search for').max(200),
  limit: z.coerce.number().int().min(1).max(50).default(20),
});
export type SearchQuery = z.infer<typeof searchQuerySchema>;

export const SEARCH_HIT_KINDS = ['job', 'customer', 'unit', 'note'] as const;
export const searchHitKindSchema = z.enum(SEARCH_HIT_KINDS);
export type SearchHitKind = z.infer<typeof searchHitKindSchema>;

export const searchHitSchema = z.object({
  kind: searchHitKindSchema,
  id: z.number().int(),
  /** Where the hit opens: the job for jobs, notes and units (their latest job), else the customer. */
  jobId: z.number().int().nullable(),
  customerId: z.number().int().nullable(),
  title: z.string(),
  detail: z.string(),
  rank: z.number(),
});
export type SearchHit = z.infer<typeof searchHitSchema>;

/** Words of the query as a tsquery: every word must appear, each as a prefix ("selec" finds "selector"). */
export function tsQueryText(q: string): string {
  const words = q
    .toLowerCase()
    .split(/[^\p{L}\p{N}]+/u)
    .filter((w) => w.length > 0)
    .slice(0, 8);
  return words.map((w) => `${w}:*`).join(' & ');
}

/** A job reference typed as "J-0042", "j42" or "42", as the job's id. */
export function jobIdFromReference(q: string): number | null {
  const m = /^\s*(?:j-?)?0*(\d{1,9})\s*$/i.exec(q);
  return m ? Number(m[1]) : null;
}

/** The serial prefix to look for: letters and digits only, at least three of them. */
export function serialPrefix(q: string): string | null {
  const key = q.toLowerCase().replace(/[^\p{L}\p{N}]+/gu, '');
  return key.length >= 3 ? key : null;
}
