import { pgTable, pgEnum, integer, text, timestamp, boolean, jsonb, varchar, index } from 'drizzle-orm/pg-core';
import { ROLES } from '../../../shared/roles';

export const roleEnum = pgEnum('role', ROLES);

export const shops = pgTable('shops', {
  id: integer().primaryKey().generatedAlwaysAsIdentity(),
  name: text().notNull(),
  email: text().notNull().default(''),
  address: text().notNull().default(''),
  currency: varchar({ length: 3 }).notNull().default('EUR'),
  /** Labour rate per hour in minor units (cents). */
  labourRateMinor: integer().notNull().default(0),
  /** Tax rate in basis points: 2000 = 20 %. */
  taxRateBp: integer().notNull().default(0),
  invoicePrefix: text().notNull().default('INV'),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

export const users = pgTable(
  'users',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    email: text().notNull().unique(),
    name: text().notNull(),
    role: roleEnum().notNull(),
    passwordHash: text().notNull(),
    /** Set only for the customer role: the customer record this sign-in belongs to. */
    customerId: integer(),
    active: boolean().notNull().default(true),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('users_shop_idx').on(t.shopId)],
);

/** connect-pg-simple's table layout, owned by our migrations. */
export const sessions = pgTable(
  'session',
  {
    sid: varchar().primaryKey(),
    sess: jsonb().notNull(),
    expire: timestamp({ precision: 6 }).notNull(),
  },
  (t) => [index('IDX_session_expire').on(t.expire)],
);

/** Every sign-in attempt, kept for throttling and for the shop's audit. */
export const signInAttempts = pgTable(
  'sign_in_attempts',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    email: text().notNull(),
    ip: text().notNull(),
    succeeded: boolean().notNull(),
    userId: integer().references(() => users.id),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('sign_in_attempts_email_at_idx').on(t.email, t.at)],
);

export const auditEvents = pgTable(
  'audit_events',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    userId: integer().references(() => users.id),
    action: text().notNull(),
    detail: jsonb().notNull().default({}),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('audit_events_shop_idx').on(t.shopId, t.at)],
);
