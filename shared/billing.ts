import { z } from 'zod';
import { CURRENCIES, MAX_QUANTITY_MILLI, MAX_TAX_RATE_BP, MAX_UNIT_PRICE_MINOR } from './money';
import { jobStatusSchema } from './jobs';

// Quotes, invoices, payments, shop money settings and the outbox: requests and answers.

export const INVOICE_STATUSES = ['draft', 'sent', 'paid', 'void'] as const;
export const invoiceStatusSchema = z.enum(INVOICE_STATUSES);
export type InvoiceStatus = z.infer<typeof invoiceStatusSchema>;
export const INVOICE_STATUS_LABELS: Record<InvoiceStatus, string> = {
  draft: 'Draft',
  sent: 'Sent, unpaid',
  paid: 'Paid',
  void: 'Void',
};

export const INVOICE_LINE_KINDS = ['labour', 'part', 'other'] as const;
export const invoiceLineKindSchema = z.enum(INVOICE_LINE_KINDS);

export const QUOTE_STATUSES = ['pending', 'approved', 'declined', 'withdrawn'] as const;
export const quoteStatusSchema = z.enum(QUOTE_STATUSES);
export type QuoteStatus = z.infer<typeof quoteStatusSchema>;

export const PAYMENT_METHODS = ['online', 'cash', 'card_terminal', 'bank_transfer'] as const;
export const paymentMethodSchema = z.enum(PAYMENT_METHODS);
export type PaymentMethod = z.infer<typeof paymentMethodSchema>;

export const EMAIL_KINDS = ['quote_ready', 'ready_for_collection', 'invoice', 'payment_received'] as const;
export const emailKindSchema = z.enum(EMAIL_KINDS);
export type EmailKind = z.infer<typeof emailKindSchema>;
export const EMAIL_STATUSES = ['queued', 'sent', 'failed', 'skipped'] as const;
export type EmailStatus = (typeof EMAIL_STATUSES)[number];

const text = (max: number) => z.string().trim().max(max);

/* ---------- shop settings (owner) ---------- */

export const shopSettingsSchema = z.object({
  name: text(200).min(1, 'Shop name is required'),
  email: z.union([z.string().trim().toLowerCase().email('Enter a valid e-mail address'), z.literal('')]),
  address: text(500),
  currency: z.enum(CURRENCIES),
  /** Labour per hour, minor units. */
  labourRateMinor: z.number().int().min(0).max(MAX_UNIT_PRICE_MINOR),
  /** Tax in basis points: 2000 = 20 %. */
  taxRateBp: z.number().int().min(0).max(MAX_TAX_RATE_BP),
  invoicePrefix: z
    .string()
    .trim()
    .min(1, 'Invoice prefix is required')
    .max(12)
    .regex(/^[A-Z0-9-]+$/, 'Use capital letters, digits and hyphens'),
});
export type ShopSettings = z.infer<typeof shopSettingsSchema>;

/* ---------- invoices ---------- */

export const invoiceLineInputSchema = z.object({
  kind: invoiceLineKindSchema,
  description: text(500).min(1, 'Describe the line'),
  quantityMilli: z.number().int().min(1, 'Quantity must be above zero').max(MAX_QUANTITY_MILLI),
  unitPriceMinor: z.number().int().min(0).max(MAX_UNIT_PRICE_MINOR),
});
export type InvoiceLineInput = z.infer<typeof invoiceLineInputSchema>;

export const createInvoiceSchema = z.object({
  jobId: z.number().int().positive(),
  notes: text(2000).default(''),
});
export type CreateInvoiceRequest = z.infer<typeof createInvoiceSchema>;

export const updateInvoiceSchema = z.object({
  lines: z.array(invoiceLineInputSchema).max(200),
  notes: text(2000).default(''),
});
export type UpdateInvoiceRequest = z.infer<typeof updateInvoiceSchema>;

export const voidInvoiceSchema = z.object({ reason: text(500).min(1, 'Say why the invoice is void') });
export const recordPaymentSchema = z.object({
  method: paymentMethodSchema.exclude(['online']),
  note: text(500).default(''),
});
export type RecordPaymentRequest = z.infer<typeof recordPaymentSchema>;

export const invoiceLineSchema = invoiceLineInputSchema.extend({
  id: z.number().int(),
  position: z.number().int(),
  amountMinor: z.number().int(),
});
export type InvoiceLine = z.infer<typeof invoiceLineSchema>;

export const paymentSchema = z.object({
  id: z.number().int(),
  amountMinor: z.number().int(),
  currency: z.string(),
  method: paymentMethodSchema,
  providerRef: z.string().nullable(),
  note: z.string(),
  receivedAt: z.string(),
});
export type Payment = z.infer<typeof paymentSchema>;

export const invoiceSummarySchema = z.object({
  id: z.number().int(),
  number: z.number().int(),
  reference: z.string(),
  status: invoiceStatusSchema,
  jobId: z.number().int(),
  jobReference: z.string(),
  customerId: z.number().int(),
  customerName: z.string(),
  unitLabel: z.string(),
  currency: z.string(),
  totalMinor: z.number().int(),
  createdAt: z.string(),
  sentAt: z.string().nullable(),
  paidAt: z.string().nullable(),
});
export type InvoiceSummary = z.infer<typeof invoiceSummarySchema>;

export const invoiceSchema = invoiceSummarySchema.extend({
  taxRateBp: z.number().int(),
  subtotalMinor: z.number().int(),
  taxMinor: z.number().int(),
  notes: z.string(),
  voidReason: z.string(),
  lines: z.array(invoiceLineSchema),
  payments: z.array(paymentSchema),
});
export type Invoice = z.infer<typeof invoiceSchema>;

export const invoiceListQuerySchema = z.object({
  status: invoiceStatusSchema.optional(),
  jobId: z.coerce.number().int().positive().optional(),
});

/* ---------- quotes ---------- */

export const createQuoteSchema = z.object({
  jobId: z.number().int().positive(),
  amountMinor: z.number().int().min(0).max(MAX_UNIT_PRICE_MINOR),
  text: text(4000).min(1, 'Describe the work and what the estimate covers'),
  /** Where the job goes when the customer approves. */
  nextStatus: z.enum(['repair', 'awaiting_parts']).default('repair'),
});
export type CreateQuoteRequest = z.infer<typeof createQuoteSchema>;

export const declineQuoteSchema = z.object({ reason: text(1000).default('') });

export const quoteSchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  amountMinor: z.number().int(),
  currency: z.string(),
  text: z.string(),
  status: quoteStatusSchema,
  nextStatus: jobStatusSchema,
  declineReason: z.string(),
  createdAt: z.string(),
  decidedAt: z.string().nullable(),
});
export type Quote = z.infer<typeof quoteSchema>;

/* ---------- payments ---------- */

export const checkoutResponseSchema = z.object({ url: z.string().url() });
export type CheckoutResponse = z.infer<typeof checkoutResponseSchema>;

/* ---------- outbox ---------- */

export const attachmentInfoSchema = z.object({
  filename: z.string(),
  contentType: z.string(),
  size: z.number().int(),
});
export type AttachmentInfo = z.infer<typeof attachmentInfoSchema>;

export const outboxMessageSchema = z.object({
  id: z.number().int(),
  kind: emailKindSchema,
  status: z.enum(EMAIL_STATUSES),
  error: z.string(),
  from: z.string(),
  to: z.string(),
  subject: z.string(),
  text: z.string(),
  jobId: z.number().int().nullable(),
  invoiceId: z.number().int().nullable(),
  attachments: z.array(attachmentInfoSchema),
  /** True when the app's own local mailbox received it (development and tests). */
  inLocalMailbox: z.boolean(),
  createdAt: z.string(),
  sentAt: z.string().nullable(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;

/* ---------- the customer's own view ---------- */

export const portalEventSchema = z.object({
  at: z.string(),
  kind: z.string(),
  toStatus: jobStatusSchema.nullable(),
  note: z.string(),
});

export const portalJobSummarySchema = z.object({
  id: z.number().int(),
  reference: z.string(),
  status: jobStatusSchema,
  unitLabel: z.string(),
  reportedFault: z.string(),
  pendingQuote: z.boolean(),
  unpaidInvoices: z.number().int(),
  updatedAt: z.string(),
});
export type PortalJobSummary = z.infer<typeof portalJobSummarySchema>;

export const portalJobSchema = portalJobSummarySchema.extend({
  unitSerial: z.string(),
  faultFound: z.string(),
  shopName: z.string(),
  events: z.array(portalEventSchema),
  quotes: z.array(quoteSchema),
  invoices: z.array(invoiceSchema),
});
export type PortalJob = z.infer<typeof portalJobSchema>;

export const portalUnitSchema = z.object({
  id: z.number().int(),
  kind: z.string(),
  maker: z.string(),
  model: z.string(),
  serial: z.string(),
});
export type PortalUnit = z.infer<typeof portalUnitSchema>;

/* ---------- a job's money side, for staff ---------- */

export const jobBillingSchema = z.object({
  jobId: z.number().int(),
  reference: z.string(),
  status: jobStatusSchema,
  unitLabel: z.string(),
  customerName: z.string(),
  customerEmail: z.string(),
  labourHours: z.number(),
  partsCount: z.number().int(),
  currency: z.string(),
  quotes: z.array(quoteSchema),
  invoices: z.array(invoiceSummarySchema),
  emails: z.array(outboxMessageSchema),
});
export type JobBilling = z.infer<typeof jobBillingSchema>;
