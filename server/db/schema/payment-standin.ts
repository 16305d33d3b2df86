import { jsonb, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core';

/** A checkout session in the provider's wire format, plus the line titles the card page shows. */
export interface StandinSession {
  id: string;
  object: 'checkout.session';
  amount_total: number;
  currency: string;
  mode: 'payment';
  status: 'open' | 'complete' | 'expired';
  payment_status: 'unpaid' | 'paid';
  payment_intent: string | null;
  url: string;
  success_url: string;
  cancel_url: string | null;
  client_reference_id: string | null;
  customer_email: string | null;
  metadata: Record<string, string>;
  created: number;
  livemode: false;
  /** Shown on the card page only. */
  _title: string;
}

/**
 * The local payment stand-in's checkout sessions, kept here rather than in each process so that
 * every node's stand-in sees every checkout. Only used when no real provider key is configured.
 */
export const paymentStandinCheckouts = pgTable(
  'payment_standin_checkouts',
  {
    /** The session id the stand-in hands out (cs_test_…). */
    id: text().primaryKey(),
    /** The Idempotency-Key of the create request, so a retried create returns the same session. */
    idempotencyKey: text(),
    body: jsonb().$type<StandinSession>().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('payment_standin_checkouts_idempotency_key_idx').on(t.idempotencyKey)],
);
