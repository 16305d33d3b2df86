import { and, desc, eq, inArray, max, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client';
import { auditEvents, customers, signInAttempts, users } from '../db/schema/index';
import type { AuditRecord, ShopUser, SignInRecord, UserCreate, UserUpdate } from '../../shared/users';
import { passwordProblem } from '../../shared/users';
import { HttpError, conflict, notFound } from '../http-error';
import { hashPassword, verifyPassword } from './passwords';

export async function recordAudit(db: DbOrTx, shopId: number, userId: number | null, action: string, detail: Record<string, unknown>) {
  await db.insert(auditEvents).values({ shopId, userId, action, detail });
}

export async function listUsers(db: DbOrTx, shopId: number): Promise<ShopUser[]> {
  const last = db
    .select({ userId: signInAttempts.userId, at: max(signInAttempts.at).as('last_at') })
    .from(signInAttempts)
    .where(eq(signInAttempts.succeeded, true))
    .groupBy(signInAttempts.userId)
    .as('last');
  const rows = await db
    .select({
      id: users.id,
      email: users.email,
      name: users.name,
      role: users.role,
      customerId: users.customerId,
      active: users.active,
      createdAt: users.createdAt,
      lastSignInAt: last.at,
    })
    .from(users)
    .leftJoin(last, eq(last.userId, users.id))
    .where(eq(users.shopId, shopId))
    .orderBy(users.role, users.name);
  return rows.map((r) => ({
    ...r,
    createdAt: r.createdAt.toISOString(),
    lastSignInAt: r.lastSignInAt ? new Date(r.lastSignInAt).toISOString() : null,
  }));
}

async function assertCustomerInShop(db: DbOrTx, shopId: number, customerId: number) {
  const [row] = await db.select({ id: customers.id }).from(customers).where(and(eq(customers.shopId, shopId), eq(customers.id, customerId)));
  if (!row) throw new HttpError(400, 'That customer record does not exist in this shop', 'bad_request');
}

export async function createUser(db: Db, shopId: number, actorId: number, input: UserCreate): Promise<ShopUser> {
  if (input.customerId !== null) await assertCustomerInShop(db, shopId, input.customerId);
  const passwordHash = await hashPassword(input.password);
  const id = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(users)
      .values({ shopId, email: input.email, name: input.name, role: input.role, customerId: input.role === 'customer' ? input.customerId : null, passwordHash })
      .onConflictDoNothing({ target: users.email })
      .returning({ id: users.id });
    if (!row) throw conflict('A user with that e-mail address already exists');
    await recordAudit(tx, shopId, actorId, 'user.created', { userId: row.id, email: input.email, role: input.role });
    return row.id;
  });
  return (await listUsers(db, shopId)).find((u) => u.id === id)!;
}

/** Role and activation changes are audited; the shop never loses its last active owner. */
export async function updateUser(db: Db, shopId: number, actorId: number, id: number, input: UserUpdate): Promise<ShopUser> {
  await db.transaction(async (tx) => {
    // Lock the shop's owners so two concurrent demotions cannot both pass the last-owner check.
    const owners = await tx
      .select({ id: users.id })
      .from(users)
      .where(and(eq(users.shopId, shopId), eq(users.role, 'owner'), eq(users.active, true)))
      .for('update');
    const [current] = await tx.select().from(users).where(and(eq(users.shopId, shopId), eq(users.id, id))).for('update');
    if (!current) throw notFound('User');
    const role = input.role ?? current.role;
    const active = input.active ?? current.active;
    const customerId = role === 'customer' ? (input.customerId !== undefined ? input.customerId : current.customerId) : null;
    if (role === 'customer') {
      if (customerId === null) throw new HttpError(400, 'A customer sign-in must belong to a customer record', 'bad_request');
      await assertCustomerInShop(tx, shopId, customerId);
    }
    const losesOwner = current.role === 'owner' && current.active && (role !== 'owner' || !active);
    if (losesOwner && owners.length <= 1) throw conflict('The shop needs at least one active owner');
    await tx.update(users).set({ name: input.name ?? current.name, role, active, customerId }).where(eq(users.id, id));
    if (role !== current.role) await recordAudit(tx, shopId, actorId, 'user.role_changed', { userId: id, from: current.role, to: role });
    if (active !== current.active) await recordAudit(tx, shopId, actorId, active ? 'user.activated' : 'user.deactivated', { userId: id });
    if (!active || role !== current.role) await endSessions(tx, id);
  });
  return (await listUsers(db, shopId)).find((u) => u.id === id)!;
}

/** Drops every stored session of a user (after a password or role change). */
export async function endSessions(db: DbOrTx, userId: number, keepSid?: string) {
  await db.execute(
    keepSid
      ? sql`delete from "session" where (sess->>'userId')::int = ${userId} and sid <> ${keepSid}`
      : sql`delete from "session" where (sess->>'userId')::int = ${userId}`,
  );
}

export async function setPassword(db: Db, shopId: number, actorId: number, userId: number, newPassword: string, keepSid?: string) {
  const [user] = await db.select().from(users).where(and(eq(users.shopId, shopId), eq(users.id, userId)));
  if (!user) throw notFound('User');
  const problem = passwordProblem(newPassword, user.email);
  if (problem) throw new HttpError(400, problem, 'validation', [{ path: 'newPassword', message: problem }]);
  const passwordHash = await hashPassword(newPassword);
  await db.transaction(async (tx) => {
    await tx.update(users).set({ passwordHash }).where(eq(users.id, userId));
    await recordAudit(tx, shopId, actorId, actorId === userId ? 'password.changed' : 'password.reset', { userId });
    await endSessions(tx, userId, keepSid);
  });
}

export async function changeOwnPassword(db: Db, shopId: number, userId: number, current: string, next: string, keepSid: string) {
  const [user] = await db.select().from(users).where(eq(users.id, userId));
  if (!user || !(await verifyPassword(user.passwordHash, current))) {
    throw new HttpError(400, 'The current password is not right', 'validation', [{ path: 'currentPassword', message: 'Not right' }]);
  }
  await setPassword(db, shopId, userId, userId, next, keepSid);
}

export async function listSignIns(db: DbOrTx, shopId: number, limit = 200): Promise<SignInRecord[]> {
  const shopUserIds = db.select({ id: users.id }).from(users).where(eq(users.shopId, shopId));
  const rows = await db
    .select({ id: signInAttempts.id, email: signInAttempts.email, ip: signInAttempts.ip, succeeded: signInAttempts.succeeded, at: signInAttempts.at })
    .from(signInAttempts)
    .where(inArray(signInAttempts.userId, shopUserIds))
    .orderBy(desc(signInAttempts.at))
    .limit(limit);
  return rows.map((r) => ({ ...r, at: r.at.toISOString() }));
}

export async function listAudit(db: DbOrTx, shopId: number, limit = 200): Promise<AuditRecord[]> {
  const rows = await db
    .select({ id: auditEvents.id, action: auditEvents.action, userName: users.name, detail: auditEvents.detail, at: auditEvents.at })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.userId))
    .where(eq(auditEvents.shopId, shopId))
    .orderBy(desc(auditEvents.at))
    .limit(limit);
  return rows.map((r) => ({ ...r, detail: (r.detail ?? {}) as Record<string, unknown>, at: r.at.toISOString() }));
}
