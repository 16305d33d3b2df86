import { sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
// Column names below are the schema's snake_case names (server/db/schema/).
import { customers, jobEvents, jobs, units } from '../db/schema/index';
import { SEARCH_CONFIG } from '../db/schema/search-columns';
import type { SessionUser } from '../../shared/auth';
import { jobIdFromReference, serialPrefix, tsQueryText, type SearchHit, type SearchQuery } from '../../shared/search';
import { jobReference } from './jobs';

interface HitRow extends Record<string, unknown> {
  kind: SearchHit['kind'];
  id: number;
  jobId: number | null;
  customerId: number | null;
  title: string;
  detail: string;
  rank: number;
}

/** Extra rank for an exact job reference or serial, so the record asked for by name comes first. */
const EXACT_BONUS = 10;
const PREFIX_BONUS = 1;
/** How many of the newest matches of each kind are ranked. */
const CANDIDATES = 400;

/**
 * Shop search over jobs (fault as reported and found, intake remarks), job notes, units (maker,
 * model, serial) and customers, through the GIN-indexed tsvector columns; serials and job
 * references also match by prefix or number. Staff see their shop; a customer only their own
 * jobs and units, and neither notes nor other customers.
 */
export function searchStatement(viewer: SessionUser, query: SearchQuery): SQL {
  const shopId = viewer.shop.id;
  const customerOnly = viewer.role === 'customer';
  const ownCustomer = viewer.customerId ?? -1;
  const text = tsQueryText(query.q);
  const refId = jobIdFromReference(query.q);
  const serial = serialPrefix(query.q);
  const limit = query.limit;
  const tsq = sql`to_tsquery(${SEARCH_CONFIG}, ${text})`;
  const matches = (vector: SQL) => (text ? sql`${vector} @@ ${tsq}` : sql`false`);
  const rank = (vector: SQL) => (text ? sql`ts_rank(${vector}, ${tsq})` : sql`0`);
  const ownOnly = (column: SQL) => (customerOnly ? sql`and ${column} = ${ownCustomer}` : sql``);

  // Each kind ranks at most the CANDIDATES newest matches: a word every tenth job carries would
  // otherwise be ranked across thousands of rows on every keystroke. Fewer matches are all ranked.
  const jobCandidates = sql`(
    select j.id, j.search_vector from ${jobs} j
    where j.shop_id = ${shopId} ${ownOnly(sql`j.customer_id`)} and ${matches(sql`j.search_vector`)}
    order by j.id desc limit ${CANDIDATES})`;
  const jobColumns = (rankExpr: SQL) => sql`
    select 'job' as "kind", j.id as "id", j.id as "jobId", j.customer_id as "customerId",
      u.maker || ' ' || u.model || ' · ' || c.name as "title",
      j.reported_fault || case when j.fault_found <> '' then ' — found: ' || j.fault_found else '' end as "detail",
      ${rankExpr} as "rank"`;
  // Text matches and the job named by its reference are separate branches, so each uses its own
  // index (an OR of the two would read every job of the shop).
  const jobHits = sql`(
    ${jobColumns(rank(sql`m.search_vector`))}
    from ${jobCandidates} m
    join ${jobs} j on j.id = m.id join ${units} u on u.id = j.unit_id join ${customers} c on c.id = j.customer_id
    order by "rank" desc, j.id desc limit ${limit})
    union all (
    ${jobColumns(sql`${EXACT_BONUS}::real`)}
    from ${jobs} j join ${units} u on u.id = j.unit_id join ${customers} c on c.id = j.customer_id
    where j.shop_id = ${shopId} ${ownOnly(sql`j.customer_id`)} and j.id = ${refId ?? -1})`;

  const serialMatch = serial ? sql`(u.serial_key like ${`${serial}%`})` : sql`false`;
  const unitHits = sql`(
    select 'unit' as "kind", u.id as "id",
      (select max(j2.id) from ${jobs} j2 where j2.unit_id = u.id and j2.shop_id = ${shopId}) as "jobId",
      u.customer_id as "customerId",
      u.maker || ' ' || u.model as "title",
      case when u.serial <> '' then 'Serial ' || u.serial || ' · ' else '' end || c.name as "detail",
      ${rank(sql`u.search_vector`)}
        + case when u.serial_key = ${serial ?? ''} then ${EXACT_BONUS} when ${serialMatch} then ${PREFIX_BONUS} else 0 end as "rank"
    from (
      (select u.id from ${units} u where u.shop_id = ${shopId} ${ownOnly(sql`u.customer_id`)} and ${matches(sql`u.search_vector`)} order by u.id desc limit ${CANDIDATES})
      union
      (select u.id from ${units} u where u.shop_id = ${shopId} ${ownOnly(sql`u.customer_id`)} and ${serialMatch} order by u.serial_key limit ${CANDIDATES})
    ) m
    join ${units} u on u.id = m.id join ${customers} c on c.id = u.customer_id
    order by "rank" desc, u.id desc limit ${limit})`;

  const staffOnly = customerOnly
    ? sql``
    : sql`
    union all (
    select 'customer' as "kind", c.id as "id", null::int as "jobId", c.id as "customerId",
      c.name as "title", concat_ws(' · ', nullif(c.email, ''), nullif(c.phone, '')) as "detail",
      ${rank(sql`c.search_vector`)} as "rank"
    from (select c.id from ${customers} c where c.shop_id = ${shopId} and ${matches(sql`c.search_vector`)} order by c.id desc limit ${CANDIDATES}) m
    join ${customers} c on c.id = m.id
    order by "rank" desc, c.id desc limit ${limit})
    union all (
    select 'note' as "kind", e.id as "id", e.job_id as "jobId", j.customer_id as "customerId",
      'Note on J-' || lpad(e.job_id::text, 4, '0') as "title", e.note as "detail",
      ${rank(sql`e.search_vector`)} as "rank"
    from (select e.id from ${jobEvents} e where e.shop_id = ${shopId} and e.note <> '' and ${matches(sql`e.search_vector`)} order by e.id desc limit ${CANDIDATES}) m
    join ${jobEvents} e on e.id = m.id join ${jobs} j on j.id = e.job_id
    order by "rank" desc, e.id desc limit ${limit})`;

  return sql`
    select * from (
      select distinct on ("kind", "id") * from (${jobHits} union all ${unitHits} ${staffOnly}) hits
      order by "kind", "id", "rank" desc
    ) best
    order by "rank" desc, "kind", "id" desc
    limit ${limit}`;
}

export async function searchShop(db: DbOrTx, viewer: SessionUser, query: SearchQuery): Promise<SearchHit[]> {
  const result = await db.execute<HitRow>(searchStatement(viewer, query));
  return result.rows.map((r) => ({
    kind: r.kind,
    id: Number(r.id),
    jobId: r.jobId === null ? null : Number(r.jobId),
    customerId: r.customerId === null ? null : Number(r.customerId),
    title: r.kind === 'job' ? `${jobReference(Number(r.id))} · ${r.title}` : r.title,
    detail: r.detail.length > 240 ? `${r.detail.slice(0, 239)}…` : r.detail,
    rank: Number(r.rank),
  }));
}
