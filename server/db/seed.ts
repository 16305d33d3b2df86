/**
 * Demo data for a new install: an invented workshop, its staff, customers and equipment.
 * Every name, address and model here is made up.
 */
import { sql } from 'drizzle-orm';
import type { Db, DbOrTx } from './client';
import { customers, jobEvents, jobs, shops, units, users } from './schema/index';
import { hashPassword } from '../services/passwords';

export const DEMO_PASSWORD = 'bench-demo-2026';
export const DEMO_USERS = [
  { email: 'owner@quietpath.test', name: 'Odile Brannock', role: 'owner' },
  { email: 'tech@quietpath.test', name: 'Teo Marsh-Ellery', role: 'technician' },
  { email: 'desk@quietpath.test', name: 'Dara Quillfeather', role: 'front_desk' },
  { email: 'customer@quietpath.test', name: 'Casimir Fennow', role: 'customer' },
] as const;

/** Extra steps that later parts of the product add to the demo (captures, invoices…). */
export type DemoExtension = (tx: DbOrTx, ids: DemoIds) => Promise<void>;
export interface DemoIds {
  shopId: number;
  users: Record<(typeof DEMO_USERS)[number]['role'], number>;
  customerIds: number[];
  unitIds: number[];
  jobIds: number[];
}

/** Seeds once: returns false when the database already holds a shop. */
export async function seedDemo(db: Db, extensions: DemoExtension[] = []): Promise<boolean> {
  const [{ n }] = (await db.execute(sql`select count(*)::int as n from shops`)).rows as [{ n: number }];
  if (n > 0) return false;
  const hash = await hashPassword(DEMO_PASSWORD);
  await db.transaction(async (tx) => {
    const [shop] = await tx
      .insert(shops)
      .values({
        name: 'Copperleaf Audio Workshop',
        email: 'bench@copperleaf.quietpath.test',
        address: '4 Ferrule Yard, Eastbrook',
        currency: 'EUR',
        labourRateMinor: 6500,
        taxRateBp: 2000,
        invoicePrefix: 'CAW',
      })
      .returning();
    const shopId = shop!.id;

    const customerRows = await tx
      .insert(customers)
      .values([
        { shopId, name: 'Casimir Fennow', email: 'customer@quietpath.test', phone: '+00 100 200 301', address: '17 Larkspur Close, Eastbrook' },
        { shopId, name: 'Ines Valdrop', email: 'ines.valdrop@example.test', phone: '+00 100 200 302', address: '2 Quarry Steps, Westhollow' },
        { shopId, name: 'Rupert Ashgrove-Tull', email: 'r.ashgrove@example.test', phone: '+00 100 200 303', address: '9 Mill Lade, Eastbrook' },
      ])
      .returning({ id: customers.id });
    const customerIds = customerRows.map((c) => c.id);

    const userIds = {} as DemoIds['users'];
    for (const u of DEMO_USERS) {
      const [row] = await tx
        .insert(users)
        .values({ shopId, email: u.email, name: u.name, role: u.role, passwordHash: hash, customerId: u.role === 'customer' ? customerIds[0] : null })
        .returning({ id: users.id });
      userIds[u.role] = row!.id;
    }

    const unitRows = await tx
      .insert(units)
      .values([
        { shopId, customerId: customerIds[0]!, kind: 'integrated_amplifier', maker: 'Vellmark', model: 'Solace 70', serial: 'VS70-004512', notes: 'Four line inputs, one phono (MM).', inputs: ['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder'] },
        { shopId, customerId: customerIds[1]!, kind: 'receiver', maker: 'Orrindale', model: 'Tidewater R4', serial: 'TR4-11873', notes: '' },
        { shopId, customerId: customerIds[2]!, kind: 'phono_stage', maker: 'Tamsett Sound Works', model: 'Groovewell PS', serial: 'GW-0291', notes: 'External supply.' },
      ])
      .returning({ id: units.id });
    const unitIds = unitRows.map((u) => u.id);

    const jobRows = await tx
      .insert(jobs)
      .values([
        { shopId, unitId: unitIds[0]!, customerId: customerIds[0]!, status: 'diagnosis', reportedFault: 'Crackle on the disc input; the other sources are heard faintly underneath.', accessories: 'Remote control', conditionNotes: 'Light scratches on the lid.', assignedTechnicianId: userIds.technician },
        { shopId, unitId: unitIds[1]!, customerId: customerIds[1]!, status: 'booked_in', reportedFault: 'Right channel dead after a power cut.', accessories: 'None', conditionNotes: 'Good.' },
        { shopId, unitId: unitIds[2]!, customerId: customerIds[2]!, status: 'ready', reportedFault: 'Loud hum with the turntable connected.', accessories: 'Power supply', conditionNotes: 'Good.', assignedTechnicianId: userIds.technician, faultFound: 'Dry joint on the ground lift link; resoldered.' },
      ])
      .returning({ id: jobs.id, status: jobs.status });
    await tx.insert(jobEvents).values(
      jobRows.map((j) => ({ shopId, jobId: j.id, userId: userIds.front_desk, kind: 'status', toStatus: j.status, note: 'Booked in at the counter.' })),
    );

    const ids: DemoIds = { shopId, users: userIds, customerIds, unitIds, jobIds: jobRows.map((j) => j.id) };
    for (const extend of extensions) await extend(tx, ids);
  });
  return true;
}
