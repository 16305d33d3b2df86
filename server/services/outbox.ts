import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client';
import { mailboxMessages, outboundEmails } from '../db/schema/index';
import type { EmailKind, OutboxMessage } from '../../shared/billing';
import { composeMail, type OutgoingMail } from '../mail/compose';
import { parseMail, type ParsedAttachment } from '../mail/mime';
import type { Mailer } from '../mail/transport';
import { conflict, notFound } from '../http-error';

export interface QueueEmail {
  shopId: number;
  kind: EmailKind;
  mail: OutgoingMail;
  jobId?: number | null;
  invoiceId?: number | null;
  quoteId?: number | null;
  createdBy: number | null;
}

/**
 * Composes the message and files it as queued, inside the caller's transaction, so the business
 * change and the record that a message is owed commit together. Delivery happens after commit.
 * A customer without an e-mail address gets a "skipped" row, so the desk sees nothing went out.
 */
export async function queueEmail(tx: DbOrTx, q: QueueEmail): Promise<number> {
  const composed = await composeMail(q.mail);
  const noAddress = q.mail.to.address.trim() === '';
  const [row] = await tx
    .insert(outboundEmails)
    .values({
      shopId: q.shopId,
      kind: q.kind,
      status: noAddress ? 'skipped' : 'queued',
      error: noAddress ? 'The customer has no e-mail address on file' : '',
      jobId: q.jobId ?? null,
      invoiceId: q.invoiceId ?? null,
      quoteId: q.quoteId ?? null,
      fromAddress: `${q.mail.from.name} <${q.mail.from.address}>`,
      toAddress: noAddress ? q.mail.to.name : `${q.mail.to.name} <${q.mail.to.address}>`,
      subject: q.mail.subject,
      text: q.mail.text,
      messageId: composed.messageId,
      attachments: q.mail.attachments.map((a) => ({ filename: a.filename, contentType: a.contentType, size: a.content.length })),
      raw: composed.raw,
      createdBy: q.createdBy,
    })
    .returning({ id: outboundEmails.id });
  return row!.id;
}

/** Sends queued (or failed, on retry) messages; the outcome is recorded on each row, never thrown. */
export async function deliverEmails(db: Db, mailer: Mailer, ids: number[]): Promise<void> {
  for (const id of ids) {
    const [row] = await db.select().from(outboundEmails).where(eq(outboundEmails.id, id));
    if (!row || (row.status !== 'queued' && row.status !== 'failed')) continue;
    const envelopeFrom = /<([^>]+)>/.exec(row.fromAddress)?.[1] ?? row.fromAddress;
    const envelopeTo = /<([^>]+)>/.exec(row.toAddress)?.[1] ?? row.toAddress;
    try {
      await mailer.send({ raw: row.raw, envelope: { from: envelopeFrom, to: [envelopeTo] } });
      await db.update(outboundEmails).set({ status: 'sent', error: '', sentAt: sql`now()` }).where(eq(outboundEmails.id, id));
    } catch (err) {
      const message = err instanceof Error ? err.message : String(err);
      await db.update(outboundEmails).set({ status: 'failed', error: message.slice(0, 1000) }).where(eq(outboundEmails.id, id));
    }
  }
}

export async function retryEmail(db: Db, mailer: Mailer, shopId: number, id: number): Promise<OutboxMessage> {
  const [row] = await db
    .select({ status: outboundEmails.status })
    .from(outboundEmails)
    .where(and(eq(outboundEmails.shopId, shopId), eq(outboundEmails.id, id)));
  if (!row) throw notFound('Message');
  if (row.status !== 'failed') throw conflict('Only a message that failed to send can be sent again');
  await deliverEmails(db, mailer, [id]);
  return getOutboxMessage(db, shopId, id);
}

export async function listOutbox(db: DbOrTx, shopId: number, filter: { jobId?: number; id?: number } = {}): Promise<OutboxMessage[]> {
  const rows = await db
    .select({
      id: outboundEmails.id,
      kind: outboundEmails.kind,
      status: outboundEmails.status,
      error: outboundEmails.error,
      from: outboundEmails.fromAddress,
      to: outboundEmails.toAddress,
      subject: outboundEmails.subject,
      text: outboundEmails.text,
      jobId: outboundEmails.jobId,
      invoiceId: outboundEmails.invoiceId,
      attachments: outboundEmails.attachments,
      messageId: outboundEmails.messageId,
      createdAt: outboundEmails.createdAt,
      sentAt: outboundEmails.sentAt,
    })
    .from(outboundEmails)
    .where(and(eq(outboundEmails.shopId, shopId), filter.jobId ? eq(outboundEmails.jobId, filter.jobId) : undefined, filter.id ? eq(outboundEmails.id, filter.id) : undefined))
    .orderBy(desc(outboundEmails.createdAt), desc(outboundEmails.id))
    .limit(500);
  const ids = rows.map((r) => r.messageId);
  const received = ids.length
    ? await db
        .select({ messageId: mailboxMessages.messageId })
        .from(mailboxMessages)
        .where(and(eq(mailboxMessages.shopId, shopId), inArray(mailboxMessages.messageId, ids)))
    : [];
  const inMailbox = new Set(received.map((r) => r.messageId));
  return rows.map(({ messageId, ...r }) => ({
    ...r,
    inLocalMailbox: inMailbox.has(messageId),
    createdAt: r.createdAt.toISOString(),
    sentAt: r.sentAt ? r.sentAt.toISOString() : null,
  }));
}

export async function getOutboxMessage(db: DbOrTx, shopId: number, id: number): Promise<OutboxMessage> {
  const [row] = await listOutbox(db, shopId, { id });
  if (!row) throw notFound('Message');
  return row;
}

/**
 * One attachment, read back out of the message bytes: the copy the local mailbox received when
 * there is one (so a download proves the SMTP round trip), else the bytes we handed to SMTP.
 */
export async function getAttachment(db: DbOrTx, shopId: number, id: number, index: number): Promise<ParsedAttachment> {
  const [row] = await db
    .select({ raw: outboundEmails.raw, messageId: outboundEmails.messageId })
    .from(outboundEmails)
    .where(and(eq(outboundEmails.shopId, shopId), eq(outboundEmails.id, id)));
  if (!row) throw notFound('Message');
  const [received] = await db
    .select({ raw: mailboxMessages.raw })
    .from(mailboxMessages)
    .where(and(eq(mailboxMessages.shopId, shopId), eq(mailboxMessages.messageId, row.messageId)))
    .limit(1);
  const attachment = parseMail(received?.raw ?? row.raw).attachments[index];
  if (!attachment) throw notFound('Attachment');
  return attachment;
}
