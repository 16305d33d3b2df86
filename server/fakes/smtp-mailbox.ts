/**
 * A local SMTP server that stands in for the shop's mail provider in development and tests. It
 * accepts any message on 127.0.0.1 (no TLS, no auth: it never listens elsewhere) and files it in
 * mailbox_messages, parsed and raw, so the outbox can show what a customer would have received.
 */
import { SMTPServer } from 'smtp-server';
import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { mailboxMessages, outboundEmails } from '../db/schema/index';
import { parseMail } from '../mail/mime';

export interface FakeSmtp {
  url: string;
  close(): Promise<void>;
}

const MAX_BYTES = 25 * 1024 * 1024;

export async function startFakeSmtp(db: Db): Promise<FakeSmtp> {
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: MAX_BYTES,
    banner: 'Quietpath local mailbox',
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('error', callback);
      stream.on('end', () => {
        if (stream.sizeExceeded) return callback(Object.assign(new Error('Message too large'), { responseCode: 552 }));
        const raw = Buffer.concat(chunks);
        store(db, raw, session.envelope.mailFrom ? session.envelope.mailFrom.address : '', session.envelope.rcptTo.map((r) => r.address)).then(
          () => callback(),
          (err: unknown) => callback(err instanceof Error ? err : new Error(String(err))),
        );
      });
    },
  });
  server.on('error', (err) => console.error('Local mailbox error:', err.message));
  const port = await new Promise<number>((resolve, reject) => {
    server.server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.server.address();
      resolve(typeof address === 'object' && address ? address.port : 0);
    });
  });
  return {
    url: `smtp://127.0.0.1:${port}`,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}

async function store(db: Db, raw: Buffer, envelopeFrom: string, envelopeTo: string[]): Promise<void> {
  const parsed = parseMail(raw);
  const [sent] = parsed.messageId
    ? await db.select({ shopId: outboundEmails.shopId }).from(outboundEmails).where(eq(outboundEmails.messageId, parsed.messageId))
    : [];
  await db.insert(mailboxMessages).values({
    shopId: sent?.shopId ?? null,
    messageId: parsed.messageId,
    envelopeFrom,
    envelopeTo,
    fromHeader: parsed.from,
    toHeader: parsed.to,
    subject: parsed.subject,
    text: parsed.text,
    attachments: parsed.attachments.map((a) => ({ filename: a.filename, contentType: a.contentType, size: a.content.length })),
    raw,
    sizeBytes: raw.length,
  });
}
