import { and, eq } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { customers, jobs, shops, units } from '../db/schema/index';
import { formatMoney } from '../../shared/money';
import { notFound } from '../http-error';
import { jobReference } from '../services/jobs';
import type { MailAttachment, OutgoingMail } from './compose';

/** Who writes to whom about which job: read once per message inside the caller's transaction. */
export interface MailContext {
  shop: { name: string; email: string; address: string };
  customer: { name: string; email: string };
  jobId: number;
  jobRef: string;
  unitLabel: string;
  /** Where the customer signs in to see the job. */
  jobUrl: string;
}

export async function loadMailContext(db: DbOrTx, shopId: number, jobId: number, publicUrl: string): Promise<MailContext> {
  const [row] = await db
    .select({
      shopName: shops.name,
      shopEmail: shops.email,
      shopAddress: shops.address,
      customerName: customers.name,
      customerEmail: customers.email,
      maker: units.maker,
      model: units.model,
    })
    .from(jobs)
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .innerJoin(customers, eq(customers.id, jobs.customerId))
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!row) throw notFound('Job');
  return {
    shop: { name: row.shopName, email: row.shopEmail, address: row.shopAddress },
    customer: { name: row.customerName, email: row.customerEmail },
    jobId,
    jobRef: jobReference(jobId),
    unitLabel: `${row.maker} ${row.model}`,
    jobUrl: `${publicUrl.replace(/\/$/, '')}/my/repairs/${jobId}`,
  };
}

function envelope(ctx: MailContext, subject: string, body: string[], attachments: MailAttachment[] = []): OutgoingMail {
  const signature = [`${ctx.shop.name}`, ctx.shop.address, ctx.shop.email].filter(Boolean).join('\n');
  return {
    from: { name: ctx.shop.name, address: ctx.shop.email || 'no-reply@quietpath.invalid' },
    to: { name: ctx.customer.name, address: ctx.customer.email },
    subject,
    text: [`Dear ${ctx.customer.name},`, '', ...body, '', 'Kind regards,', signature, ''].join('\n'),
    attachments,
  };
}

export function quoteReadyMail(ctx: MailContext, quote: { amountMinor: number; currency: string; text: string }): OutgoingMail {
  return envelope(ctx, `Estimate for your ${ctx.unitLabel} (${ctx.jobRef})`, [
    `We have looked at your ${ctx.unitLabel} and estimate the repair at ${formatMoney(quote.amountMinor, quote.currency)}.`,
    '',
    quote.text,
    '',
    'Nothing further is done until you approve. Approve or decline the estimate here:',
    ctx.jobUrl,
  ]);
}

export function readyForCollectionMail(ctx: MailContext): OutgoingMail {
  return envelope(ctx, `Your ${ctx.unitLabel} is ready to collect (${ctx.jobRef})`, [
    `Your ${ctx.unitLabel} is ready for collection. The measurements taken before and after the repair are in the evidence report on your repair page:`,
    ctx.jobUrl,
    '',
    'Please bring the accessories you left with the unit on your list, if any.',
  ]);
}

export function invoiceMail(
  ctx: MailContext,
  invoice: { reference: string; totalMinor: number; currency: string },
  attachments: MailAttachment[],
): OutgoingMail {
  return envelope(
    ctx,
    `Invoice ${invoice.reference} for your ${ctx.unitLabel} (${ctx.jobRef})`,
    [
      `Please find attached invoice ${invoice.reference} for ${formatMoney(invoice.totalMinor, invoice.currency)}, together with the evidence report that shows the measurements taken before and after the repair.`,
      '',
      'You can pay online from your repair page:',
      ctx.jobUrl,
    ],
    attachments,
  );
}

export function paymentReceivedMail(ctx: MailContext, payment: { reference: string; amountMinor: number; currency: string }): OutgoingMail {
  return envelope(ctx, `Payment received for invoice ${payment.reference}`, [
    `Thank you: we have received ${formatMoney(payment.amountMinor, payment.currency)} for invoice ${payment.reference} (${ctx.unitLabel}, ${ctx.jobRef}).`,
    'The invoice is now marked paid.',
  ]);
}
