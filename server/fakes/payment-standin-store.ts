/**
 * Where the local payment stand-in keeps its checkout sessions: PostgreSQL, shared by every node,
 * so a checkout opened through one node's stand-in can be found, shown and paid through another's.
 */
import { and, eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { paymentStandinCheckouts, type StandinSession } from '../db/schema/index';

export type { StandinSession };

export interface StandinStore {
  /**
   * Stores a new session, or, when the same idempotency key was used before (on any node),
   * returns the session stored then and leaves the new one unstored.
   */
  create(session: StandinSession, idempotencyKey: string | undefined): Promise<StandinSession>;
  /** The session stored under a given idempotency key, if any. */
  byIdempotencyKey(key: string): Promise<StandinSession | null>;
  get(id: string): Promise<StandinSession | null>;
  /**
   * Marks an open session paid. Null when it was not open any more (e.g. paid a moment ago through
   * another node): the row's status is checked and changed in one statement, so only one payment wins.
   */
  complete(id: string, paymentIntent: string): Promise<StandinSession | null>;
}

export function standinStore(db: Db): StandinStore {
  const get = async (id: string) => {
    const [row] = await db.select({ body: paymentStandinCheckouts.body }).from(paymentStandinCheckouts).where(eq(paymentStandinCheckouts.id, id));
    return row?.body ?? null;
  };
  const byIdempotencyKey = async (key: string) => {
    const [row] = await db
      .select({ body: paymentStandinCheckouts.body })
      .from(paymentStandinCheckouts)
      .where(eq(paymentStandinCheckouts.idempotencyKey, key));
    return row?.body ?? null;
  };
  return {
    get,
    byIdempotencyKey,
    async create(session, idempotencyKey) {
      const [stored] = await db
        .insert(paymentStandinCheckouts)
        .values({ id: session.id, idempotencyKey: idempotencyKey ?? null, body: session })
        .onConflictDoNothing({ target: paymentStandinCheckouts.idempotencyKey })
        .returning({ body: paymentStandinCheckouts.body });
      if (stored) return stored.body;
      // The same key raced in through another request: its session is the answer.
      const earlier = idempotencyKey ? await byIdempotencyKey(idempotencyKey) : null;
      if (!earlier) throw new Error('The payment stand-in could not store a checkout session');
      return earlier;
    },
    async complete(id, paymentIntent) {
      const patch = { status: 'complete', payment_status: 'paid', payment_intent: paymentIntent };
      const [row] = await db
        .update(paymentStandinCheckouts)
        .set({ body: sql`${paymentStandinCheckouts.body} || ${JSON.stringify(patch)}::jsonb`, updatedAt: new Date() })
        .where(and(eq(paymentStandinCheckouts.id, id), sql`${paymentStandinCheckouts.body}->>'status' = 'open'`))
        .returning({ body: paymentStandinCheckouts.body });
      return row?.body ?? null;
    },
  };
}
