import { customType } from 'drizzle-orm/pg-core';
import { sql, type SQL } from 'drizzle-orm';

/** PostgreSQL's tsvector, for the generated full-text columns behind shop search. */
export const tsvector = customType<{ data: string; driverData: string }>({
  dataType: () => 'tsvector',
});

/**
 * A maker or model as a match key: lower case with everything but letters and digits removed, so
 * "Acme SA-100", "ACME sa100" and "acme  s.a. 100" meet. The same expression builds the stored
 * column and the key of a typed maker/model at intake (see shared/model-history.ts modelKey).
 */
export function modelKeySql(maker: SQL | unknown, model: SQL | unknown): SQL {
  return sql`regexp_replace(lower(${maker}), '[^[:alnum:]]+', '', 'g') || '|' || regexp_replace(lower(${model}), '[^[:alnum:]]+', '', 'g')`;
}

/** A serial without case or punctuation, for prefix matches ("sn 884" finds "SN-88412"). */
export function serialKeySql(serial: SQL | unknown): SQL {
  return sql`regexp_replace(lower(${serial}), '[^[:alnum:]]+', '', 'g')`;
}

/** Text search configuration: English stemming, so "switching" finds "switch". */
export const SEARCH_CONFIG = sql.raw(`'english'::regconfig`);
