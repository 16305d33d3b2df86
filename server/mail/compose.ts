import { randomUUID } from 'node:crypto';
import MailComposer from 'nodemailer/lib/mail-composer';

export interface MailAddress {
  name: string;
  address: string;
}

export interface MailAttachment {
  filename: string;
  contentType: string;
  content: Buffer;
}

export interface OutgoingMail {
  from: MailAddress;
  to: MailAddress;
  subject: string;
  text: string;
  attachments: MailAttachment[];
}

export interface ComposedMail {
  raw: Buffer;
  messageId: string;
  envelope: { from: string; to: string[] };
}

/**
 * Builds the exact RFC 5322 bytes that will go over SMTP, so the outbox keeps what was sent
 * (and can show or resend it) whether the receiving end is our local mailbox or a real server.
 */
export async function composeMail(mail: OutgoingMail): Promise<ComposedMail> {
  const domain = mail.from.address.split('@')[1] || 'quietpath.invalid';
  const messageId = `<${randomUUID()}@${domain}>`;
  const node = new MailComposer({
    from: mail.from,
    to: [mail.to],
    subject: mail.subject,
    text: mail.text,
    messageId,
    date: new Date(),
    attachments: mail.attachments.map((a) => ({ filename: a.filename, contentType: a.contentType, content: a.content })),
  }).compile();
  const raw = await new Promise<Buffer>((resolve, reject) => node.build((err, buf) => (err ? reject(err) : resolve(buf))));
  return { raw, messageId, envelope: { from: mail.from.address, to: [mail.to.address] } };
}
