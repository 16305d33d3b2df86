import { randomUUID } from 'node:crypto';
import type { Db } from '../../server/db/client';
import { customers, jobs, shops, units, users } from '../../server/db/schema/index';
import { hashPassword } from '../../server/services/passwords';
import type { Role } from '../../shared/roles';

export const TEST_PASSWORD = 'another-shop-pass-77';

/** A second, separate shop with one user per role and one job, to prove no query crosses shops. */
export async function makeShop(db: Db, label = 'Other') {
  const tag = randomUUID().slice(0, 8);
  const [shop] = await db.insert(shops).values({ name: `${label} Bench ${tag}` }).returning();
  const shopId = shop!.id;
  const [customer] = await db.insert(customers).values({ shopId, name: `Client ${tag}`, email: `client-${tag}@example.test` }).returning();
  const [unit] = await db
    .insert(units)
    .values({ shopId, customerId: customer!.id, kind: 'power_amplifier', maker: 'Brindlecote', model: `PX-${tag}` })
    .returning();
  const [job] = await db
    .insert(jobs)
    .values({ shopId, unitId: unit!.id, customerId: customer!.id, reportedFault: `No output ${tag}` })
    .returning();
  const hash = await hashPassword(TEST_PASSWORD);
  const emails = {} as Record<Role, string>;
  for (const role of ['owner', 'technician', 'front_desk', 'customer'] as const) {
    const email = `${role}-${tag}@other.test`;
    await db.insert(users).values({ shopId, email, name: `${role} ${tag}`, role, passwordHash: hash, customerId: role === 'customer' ? customer!.id : null });
    emails[role] = email;
  }
  return { shopId, customerId: customer!.id, unitId: unit!.id, jobId: job!.id, emails };
}
