import { sql } from 'drizzle-orm';
import {
  pgTable,
  pgEnum,
  integer,
  text,
  timestamp,
  varchar,
  jsonb,
  index,
  uniqueIndex,
  customType,
} from 'drizzle-orm/pg-core';
import {
  EMAIL_KINDS,
  EMAIL_STATUSES,
  INVOICE_LINE_KINDS,
  INVOICE_STATUSES,
  PAYMENT_METHODS,
  QUOTE_STATUSES,
  type AttachmentInfo,
} from '../../../shared/billing';
import { shops, users } from './shop';
import { customers } from './customers';
import { jobs, jobStatusEnum } from './jobs';
import { partsUsed } from './bench';

/** Raw bytes (whole e-mail messages); pg hands bytea back as a Buffer. */
const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

export const invoiceStatusEnum = pgEnum('invoice_status', INVOICE_STATUSES);
export const invoiceLineKindEnum = pgEnum('invoice_line_kind', INVOICE_LINE_KINDS);
export const quoteStatusEnum = pgEnum('quote_status', QUOTE_STATUSES);
export const paymentMethodEnum = pgEnum('payment_method', PAYMENT_METHODS);
export const emailKindEnum = pgEnum('email_kind', EMAIL_KINDS);
export const emailStatusEnum = pgEnum('email_status', EMAIL_STATUSES);

/** One row per shop; invoice numbers are taken from it under its row lock, so they have no gaps. */
export const invoiceCounters = pgTable('invoice_counters', {
  shopId: integer()
    .primaryKey()
    .references(() => shops.id),
  lastNumber: integer().notNull().default(0),
});

export const invoices = pgTable(
  'invoices',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer().notNull().references(() => jobs.id),
    customerId: integer().notNull().references(() => customers.id),
    number: integer().notNull(),
    reference: text().notNull(),
    status: invoiceStatusEnum().notNull().default('draft'),
    currency: varchar({ length: 3 }).notNull(),
    /** The shop's rate when the invoice was made; later changes to the rate do not touch it. */
    taxRateBp: integer().notNull(),
    subtotalMinor: integer().notNull().default(0),
    taxMinor: integer().notNull().default(0),
    totalMinor: integer().notNull().default(0),
    notes: text().notNull().default(''),
    voidReason: text().notNull().default(''),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    sentAt: timestamp({ withTimezone: true }),
    paidAt: timestamp({ withTimezone: true }),
    voidedAt: timestamp({ withTimezone: true }),
  },
  (t) => [
    uniqueIndex('invoices_shop_number_idx').on(t.shopId, t.number),
    index('invoices_job_idx').on(t.jobId),
    index('invoices_customer_idx').on(t.customerId),
  ],
);

export const invoiceLines = pgTable(
  'invoice_lines',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    invoiceId: integer()
      .notNull()
      .references(() => invoices.id, { onDelete: 'cascade' }),
    position: integer().notNull(),
    kind: invoiceLineKindEnum().notNull(),
    description: text().notNull(),
    /** Quantity in thousandths (1.5 h = 1500). */
    quantityMilli: integer().notNull(),
    unitPriceMinor: integer().notNull(),
    amountMinor: integer().notNull(),
    partUsedId: integer().references(() => partsUsed.id, { onDelete: 'set null' }),
  },
  (t) => [index('invoice_lines_invoice_idx').on(t.invoiceId, t.position)],
);

/** Checkout sessions we opened with the payment provider, so a webhook can only settle one of ours. */
export const paymentCheckouts = pgTable(
  'payment_checkouts',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    invoiceId: integer()
      .notNull()
      .references(() => invoices.id),
    sessionId: text().notNull(),
    amountMinor: integer().notNull(),
    currency: varchar({ length: 3 }).notNull(),
    url: text().notNull(),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('payment_checkouts_session_idx').on(t.sessionId), index('payment_checkouts_invoice_idx').on(t.invoiceId)],
);

export const payments = pgTable(
  'payments',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    invoiceId: integer()
      .notNull()
      .references(() => invoices.id),
    amountMinor: integer().notNull(),
    currency: varchar({ length: 3 }).notNull(),
    method: paymentMethodEnum().notNull(),
    /** The provider's payment id for online payments. */
    providerRef: text(),
    eventId: text(),
    note: text().notNull().default(''),
    receivedBy: integer().references(() => users.id),
    receivedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('payments_invoice_idx').on(t.invoiceId), uniqueIndex('payments_provider_ref_idx').on(t.providerRef)],
);

/** Every webhook event id we acted on: a replay of the same id changes nothing. */
export const processedWebhookEvents = pgTable('processed_webhook_events', {
  eventId: text().primaryKey(),
  /** Known once the event names one of our checkouts. */
  shopId: integer().references(() => shops.id),
  type: text().notNull(),
  outcome: text().notNull(),
  invoiceId: integer().references(() => invoices.id),
  receivedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

export const quotes = pgTable(
  'quotes',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    amountMinor: integer().notNull(),
    currency: varchar({ length: 3 }).notNull(),
    text: text().notNull(),
    status: quoteStatusEnum().notNull().default('pending'),
    /** Where the job goes on approval (repair, or awaiting_parts when parts must be ordered). */
    nextStatus: jobStatusEnum().notNull(),
    declineReason: text().notNull().default(''),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    decidedBy: integer().references(() => users.id),
    decidedAt: timestamp({ withTimezone: true }),
  },
  (t) => [
    index('quotes_job_idx').on(t.jobId),
    // At most one open quote per job.
    uniqueIndex('quotes_one_pending_idx').on(t.jobId).where(sql`status = 'pending'`),
  ],
);

/** Every message the shop sent (or tried to), with the exact bytes handed to SMTP. */
export const outboundEmails = pgTable(
  'outbound_emails',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    kind: emailKindEnum().notNull(),
    status: emailStatusEnum().notNull().default('queued'),
    error: text().notNull().default(''),
    jobId: integer().references(() => jobs.id, { onDelete: 'set null' }),
    invoiceId: integer().references(() => invoices.id),
    quoteId: integer().references(() => quotes.id, { onDelete: 'set null' }),
    fromAddress: text().notNull(),
    toAddress: text().notNull(),
    subject: text().notNull(),
    text: text().notNull(),
    messageId: text().notNull(),
    attachments: jsonb().$type<AttachmentInfo[]>().notNull().default([]),
    raw: bytea().notNull(),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    sentAt: timestamp({ withTimezone: true }),
  },
  (t) => [index('outbound_emails_shop_idx').on(t.shopId, t.createdAt), uniqueIndex('outbound_emails_message_id_idx').on(t.messageId)],
);

/** What the built-in fake SMTP server received (development and tests only), parsed and raw. */
export const mailboxMessages = pgTable(
  'mailbox_messages',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    /** Matched through the Message-ID of one of our outbound e-mails, when it is one. */
    shopId: integer().references(() => shops.id),
    messageId: text().notNull().default(''),
    envelopeFrom: text().notNull(),
    envelopeTo: jsonb().$type<string[]>().notNull(),
    fromHeader: text().notNull().default(''),
    toHeader: text().notNull().default(''),
    subject: text().notNull().default(''),
    text: text().notNull().default(''),
    attachments: jsonb().$type<AttachmentInfo[]>().notNull().default([]),
    raw: bytea().notNull(),
    sizeBytes: integer().notNull(),
    receivedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('mailbox_messages_message_id_idx').on(t.messageId)],
);
