import { and, eq, gt, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { shops, signInAttempts, users } from '../db/schema/index';
import type { SessionUser } from '../../shared/auth';
import { HttpError } from '../http-error';
import { decoyHash, verifyPassword } from './passwords';

/** Throttling windows: a few wrong passwords per account, more per address (trade practice, not a standard). */
export const THROTTLE = { windowMinutes: 15, perEmail: 5, perIp: 30 } as const;

export async function loadSessionUser(db: Db, userId: number): Promise<SessionUser | null> {
  const rows = await db
    .select({
      id: users.id,
      name: users.name,
      email: users.email,
      role: users.role,
      customerId: users.customerId,
      active: users.active,
      shopId: shops.id,
      shopName: shops.name,
    })
    .from(users)
    .innerJoin(shops, eq(shops.id, users.shopId))
    .where(eq(users.id, userId));
  const row = rows[0];
  if (!row || !row.active) return null;
  return {
    id: row.id,
    name: row.name,
    email: row.email,
    role: row.role,
    customerId: row.customerId,
    shop: { id: row.shopId, name: row.shopName },
  };
}

async function recentFailures(db: Db, column: 'email' | 'ip', value: string): Promise<number> {
  const since = sql`now() - make_interval(mins => ${THROTTLE.windowMinutes})`;
  const target = column === 'email' ? signInAttempts.email : signInAttempts.ip;
  const [row] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(signInAttempts)
    .where(and(eq(target, value), eq(signInAttempts.succeeded, false), gt(signInAttempts.at, since)));
  return row?.n ?? 0;
}

/** Checks a password with throttling; every attempt is recorded for the audit. */
export async function signIn(db: Db, email: string, password: string, ip: string): Promise<SessionUser> {
  if (
    (await recentFailures(db, 'email', email)) >= THROTTLE.perEmail ||
    (await recentFailures(db, 'ip', ip)) >= THROTTLE.perIp
  ) {
    throw new HttpError(
      429,
      `Too many failed sign-ins. Wait ${THROTTLE.windowMinutes} minutes and try again.`,
      'throttled',
    );
  }
  const [user] = await db.select().from(users).where(eq(users.email, email));
  const ok = user ? await verifyPassword(user.passwordHash, password) : await verifyPassword(await decoyHash(), password);
  const sessionUser = ok && user?.active ? await loadSessionUser(db, user.id) : null;
  await db.insert(signInAttempts).values({ email, ip, succeeded: sessionUser !== null, userId: user?.id ?? null });
  if (!sessionUser) throw new HttpError(401, 'E-mail or password is not right', 'bad_credentials');
  return sessionUser;
}
