/**
 * A shop of bench-load size for the search benchmark: customers, units and jobs made in bulk
 * with INSERT … SELECT generate_series, so 50,000 jobs take seconds. Words are drawn from small
 * invented vocabularies so common words match thousands of jobs and rare ones a handful, as in a
 * real shop's history. Every maker, model and name is made up.
 */
import { sql } from 'drizzle-orm';
import type { Db } from '../../server/db/client';

const MAKERS = ['Vellmark', 'Orrindale', 'Tamsett', 'Harrowgate', 'Pellworth', 'Quillon', 'Marrowby', 'Brindlecote', 'Ostwick', 'Callender Fieldway', 'Dunmere', 'Kestrel Hollow'];
const FAULTS = [
  'Crackle on the disc input',
  'Hum in both channels when warm',
  'Left channel dead',
  'Right channel intermittent',
  'Sources heard faintly under each other',
  'Distorted at high volume',
  'No power, fuse blown',
  'Relay clicks but no sound',
  'Tuner drifts off station',
  'Volume control scratchy',
  'Loud thump at switch-on',
  'Phono stage noisy',
  'Balance control crackles',
  'Display dim, unit works',
  'Tape monitor stuck on',
  'Headphone socket only one side',
  'Bass weak on both channels',
  'Buzz with the turntable connected',
  'Shuts down after ten minutes',
  'Selector knob loose, inputs drop out',
];
const FOUND = [
  'Input selector switch IC leaking; replaced',
  'Dry joints on the output relay; resoldered',
  'Output transistors shorted; replaced pair, bias reset',
  'Electrolytic capacitors dried out; recapped the supply',
  'Volume pot worn; cleaned and replaced',
  'Ground lift link cracked; resoldered',
  'Driver transistor noisy; replaced',
  'Bias drifted high; reset to the manual figure',
];

const arr = (xs: string[]) => sql.raw(`array[${xs.map((x) => `'${x.replace(/'/g, "''")}'`).join(',')}]`);

export async function seedSearchLoad(db: Db, shopId: number, jobCount: number): Promise<void> {
  const customerCount = Math.max(1, Math.round(jobCount / 25));
  await db.transaction(async (tx) => {
    await tx.execute(sql`
      insert into customers (shop_id, name, email, phone)
      select ${shopId}, 'Bench customer ' || g, 'customer' || g || '@load.quietpath.test', '+00 300 ' || lpad(g::text, 6, '0')
      from generate_series(1, ${customerCount}) g`);
    await tx.execute(sql`create temp table load_customers on commit drop as
      select row_number() over (order by id) as n, id from customers where shop_id = ${shopId} and email like '%@load.quietpath.test'`);
    await tx.execute(sql`
      insert into units (shop_id, customer_id, kind, maker, model, serial)
      select ${shopId}, c.id, 'integrated_amplifier',
        (${arr(MAKERS)})[1 + g % ${MAKERS.length}],
        chr(65 + g % 7) || chr(75 + g % 5) || '-' || (g % 300),
        'SN' || lpad(g::text, 7, '0')
      from generate_series(1, ${jobCount}) g
      join load_customers c on c.n = 1 + g % ${customerCount}`);
    await tx.execute(sql`
      insert into jobs (shop_id, unit_id, customer_id, status, reported_fault, fault_found, condition_notes, created_at, updated_at)
      select ${shopId}, u.id, u.customer_id,
        case when g % 10 = 0 then 'diagnosis'::job_status else 'collected'::job_status end,
        (${arr(FAULTS)})[1 + g % ${FAULTS.length}] || '; ' || lower((${arr(FAULTS)})[1 + (g / 7) % ${FAULTS.length}]),
        case when g % 10 = 0 then '' else (${arr(FOUND)})[1 + g % ${FOUND.length}] end,
        'Load job ' || g,
        now() - make_interval(hours => g), now() - make_interval(hours => g)
      from generate_series(1, ${jobCount}) g
      join units u on u.shop_id = ${shopId} and u.serial = 'SN' || lpad(g::text, 7, '0')`);
    await tx.execute(sql`
      insert into job_events (shop_id, job_id, kind, note, at)
      select ${shopId}, j.id, 'note', 'Soak test passed; ' || lower((${arr(FOUND)})[1 + j.id % ${FOUND.length}]), j.created_at
      from jobs j where j.shop_id = ${shopId} and j.id % 3 = 0`);
  });
  // Fresh statistics and visibility, as a running shop has after autovacuum.
  await db.execute(sql`vacuum analyze customers, units, jobs, job_events`);
}
