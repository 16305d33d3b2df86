import { sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
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

/**
 * Shop search over jobs (fault as reported and found, intake remarks), job notes, units (maker,
 * model, serial) and customers, through the GIN-indexed tsvector columns; serials and job
 * references also match by prefix or number. Staff see their shop; a customer only their own
 * jobs and units, and neither notes nor other customers.
 */
export async function searchShop(db: DbOrTx, viewer: SessionUser, query: SearchQuery): Promise<SearchHit[]> {
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
  const jobCustomer = customerOnly ? sql`and ${jobs.customerId} = ${ownCustomer}` : sql``;
  const unitCustomer = customerOnly ? sql`and ${units.customerId} = ${ownCustomer}` : sql``;

  const jobHits = sql`(
    select 'job' as "kind", ${jobs.id} as "id", ${jobs.id} as "jobId", ${jobs.customerId} as "customerId",
      ${units.maker} || ' ' || ${units.model} || ' · ' || ${customers.name} as "title",
      ${jobs.reportedFault} || case when ${jobs.faultFound} <> '' then ' — found: ' || ${jobs.faultFound} else '' end as "detail",
      ${rank(sql`${jobs.searchVector}`)} + case when ${jobs.id} = ${refId ?? -1} then ${EXACT_BONUS} else 0 end as "rank"
    from ${jobs}
    join ${units} on ${units.id} = ${jobs.unitId}
    join ${customers} on ${customers.id} = ${jobs.customerId}
    where ${jobs.shopId} = ${shopId} ${jobCustomer}
      and (${matches(sql`${jobs.searchVector}`)} or ${jobs.id} = ${refId ?? -1})
    order by "rank" desc, ${jobs.id} desc limit ${limit})`;

  const serialMatch = serial ? sql`(${units.serialKey} like ${`${serial}%`})` : sql`false`;
  const unitHits = sql`(
    select 'unit' as "kind", ${units.id} as "id",
      (select max(j2.id) from ${jobs} j2 where j2.unit_id = ${units.id} and j2.shop_id = ${shopId}) as "jobId",
      ${units.customerId} as "customerId",
      ${units.maker} || ' ' || ${units.model} as "title",
      case when ${units.serial} <> '' then 'Serial ' || ${units.serial} || ' · ' else '' end || ${customers.name} as "detail",
      ${rank(sql`${units.searchVector}`)}
        + case when ${units.serialKey} = ${serial ?? ''} then ${EXACT_BONUS} when ${serialMatch} then ${PREFIX_BONUS} else 0 end as "rank"
    from ${units}
    join ${customers} on ${customers.id} = ${units.customerId}
    where ${units.shopId} = ${shopId} ${unitCustomer}
      and (${matches(sql`${units.searchVector}`)} or ${serialMatch})
    order by "rank" desc, ${units.id} desc limit ${limit})`;

  const staffOnly = customerOnly
    ? sql``
    : sql`
    union all (
    select 'customer' as "kind", ${customers.id} as "id", null::int as "jobId", ${customers.id} as "customerId",
      ${customers.name} as "title", concat_ws(' · ', nullif(${customers.email}, ''), nullif(${customers.phone}, '')) as "detail",
      ${rank(sql`${customers.searchVector}`)} as "rank"
    from ${customers}
    where ${customers.shopId} = ${shopId} and ${matches(sql`${customers.searchVector}`)}
    order by "rank" desc, ${customers.id} desc limit ${limit})
    union all (
    select 'note' as "kind", ${jobEvents.id} as "id", ${jobEvents.jobId} as "jobId", ${jobs.customerId} as "customerId",
      'Note on ' || 'J-' || lpad(${jobEvents.jobId}::text, 4, '0') as "title", ${jobEvents.note} as "detail",
      ${rank(sql`${jobEvents.searchVector}`)} as "rank"
    from ${jobEvents}
    join ${jobs} on ${jobs.id} = ${jobEvents.jobId}
    where ${jobEvents.shopId} = ${shopId} and ${jobEvents.note} <> '' and ${matches(sql`${jobEvents.searchVector}`)}
    order by "rank" desc, ${jobEvents.id} desc limit ${limit})`;

  const result = await db.execute<HitRow>(sql`
    select * from (${jobHits} union all ${unitHits} ${staffOnly}) hits
    order by "rank" desc, "kind", "id" desc
    limit ${limit}`);
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
