/**
 * Our small MIME reader against messages built by nodemailer's MailComposer (an independent
 * implementation of RFC 2045–2047 and 2231), with known content.
 */
import { describe, expect, it } from 'vitest';
import MailComposer from 'nodemailer/lib/mail-composer';
import { composeMail } from '../../server/mail/compose';
import { decodeWords, parseMail } from '../../server/mail/mime';

function build(mail: ConstructorParameters<typeof MailComposer>[0]): Promise<Buffer> {
  return new Promise((resolve, reject) => new MailComposer(mail).compile().build((e, b) => (e ? reject(e) : resolve(b))));
}

describe('reading messages back', () => {
  it('headers, text and binary attachments survive byte for byte', async () => {
    const pdf = Buffer.concat([Buffer.from('%PDF-1.3\n'), Buffer.from(Array.from({ length: 3000 }, (_, i) => (i * 37) % 256))]);
    const { raw, messageId } = await composeMail({
      from: { name: 'Copperleaf Audio Workshop', address: 'bench@copperleaf.test' },
      to: { name: 'Casimir Fennow', address: 'customer@quietpath.test' },
      subject: 'Invoice CAW-0001 for your Vellmark Solace 70',
      text: 'Dear Casimir,\n\nTotal €97.50 — thank you.\n',
      attachments: [
        { filename: 'invoice-CAW-0001.pdf', contentType: 'application/pdf', content: pdf },
        { filename: 'notes.txt', contentType: 'text/plain', content: Buffer.from('plain attachment') },
      ],
    });
    const m = parseMail(raw);
    expect(m.messageId).toBe(messageId);
    expect(m.subject).toBe('Invoice CAW-0001 for your Vellmark Solace 70');
    expect(m.from).toBe('Copperleaf Audio Workshop <bench@copperleaf.test>');
    expect(m.to).toBe('Casimir Fennow <customer@quietpath.test>');
    expect(m.text.trim()).toBe('Dear Casimir,\n\nTotal €97.50 — thank you.');
    expect(m.attachments.map((a) => [a.filename, a.contentType, a.content.length])).toEqual([
      ['invoice-CAW-0001.pdf', 'application/pdf', pdf.length],
      ['notes.txt', 'text/plain', 16],
    ]);
    expect(m.attachments[0]!.content.equals(pdf)).toBe(true);
  });

  it('non-ASCII subjects and long non-ASCII file names (RFC 2047 words, RFC 2231 continuations)', async () => {
    const name = `Prüfbericht-${'Ölkondensator-'.repeat(6)}Ω.pdf`;
    const raw = await build({
      from: 'Zoë <z@example.test>',
      to: 'a@example.test',
      subject: 'Schätzung für Ihren Verstärker – 120 €',
      text: 'Grüße',
      attachments: [{ filename: name, content: Buffer.from('x'), contentType: 'application/pdf' }],
    });
    const m = parseMail(raw);
    expect(m.subject).toBe('Schätzung für Ihren Verstärker – 120 €');
    expect(m.from).toBe('Zoë <z@example.test>');
    expect(m.text).toBe('Grüße');
    expect(m.attachments[0]!.filename).toBe(name);
  });

  it('quoted-printable text is decoded', async () => {
    const raw = await build({ from: 'a@example.test', to: 'b@example.test', subject: 's', text: `Café ${'x'.repeat(120)} naïve`, textEncoding: 'quoted-printable' });
    expect(raw.toString('latin1')).toMatch(/quoted-printable/i);
    // A single-part body keeps the line end the composer puts after it.
    expect(parseMail(raw).text.trimEnd()).toBe(`Café ${'x'.repeat(120)} naïve`);
  });

  it('decodes encoded words in both B and Q forms (RFC 2047 examples)', () => {
    expect(decodeWords('=?ISO-8859-1?Q?Keld_J=F8rn_Simonsen?= <keld@example.test>')).toBe('Keld Jørn Simonsen <keld@example.test>');
    expect(decodeWords('=?ISO-8859-1?Q?a?= =?ISO-8859-1?Q?b?=')).toBe('ab');
    expect(decodeWords('=?UTF-8?B?w4lsw6lnYW50?=')).toBe('Élégant');
  });

  it('a message without a body part gives empty text and no attachments', () => {
    const m = parseMail(Buffer.from('Subject: hello\r\nMessage-ID: <1@x>\r\n\r\n'));
    expect(m).toMatchObject({ subject: 'hello', messageId: '<1@x>', text: '', attachments: [] });
  });
});
