/**
 * A small reader for the MIME messages the app itself sends (RFC 5322 headers, RFC 2045–2047
 * encodings, RFC 2046 multiparts, RFC 2231 parameters): enough to list a message's text and
 * attachments in the outbox and hand an attachment back byte for byte. It is not a general mail
 * parser: no S/MIME, no uuencode, no message/rfc822 unpacking.
 */

export interface ParsedAttachment {
  filename: string;
  contentType: string;
  content: Buffer;
}

export interface ParsedMail {
  messageId: string;
  from: string;
  to: string;
  subject: string;
  text: string;
  attachments: ParsedAttachment[];
}

type Headers = Map<string, string>;

function splitHeadAndBody(raw: Buffer): { head: string; body: Buffer } {
  const crlf = raw.indexOf('\r\n\r\n');
  const lf = raw.indexOf('\n\n');
  let at: number;
  let sep: number;
  if (crlf !== -1 && (lf === -1 || crlf < lf)) [at, sep] = [crlf, 4];
  else if (lf !== -1) [at, sep] = [lf, 2];
  else return { head: raw.toString('latin1'), body: Buffer.alloc(0) };
  return { head: raw.subarray(0, at).toString('latin1'), body: raw.subarray(at + sep) };
}

function parseHeaders(head: string): Headers {
  const headers: Headers = new Map();
  // Unfold: a line that starts with white space continues the one before (RFC 5322 §2.2.3).
  const unfolded = head.replace(/\r?\n[ \t]+/g, ' ');
  for (const line of unfolded.split(/\r?\n/)) {
    const colon = line.indexOf(':');
    if (colon <= 0) continue;
    const name = line.slice(0, colon).trim().toLowerCase();
    if (!headers.has(name)) headers.set(name, line.slice(colon + 1).trim());
  }
  return headers;
}

function decodeCharset(bytes: Buffer, charset: string): string {
  try {
    return new TextDecoder(charset.toLowerCase() || 'utf-8').decode(bytes);
  } catch {
    return bytes.toString('latin1');
  }
}

function decodeQuotedPrintable(text: string, header = false): Buffer {
  const source = header ? text.replace(/_/g, ' ') : text.replace(/=\r?\n/g, '');
  const out: number[] = [];
  for (let i = 0; i < source.length; i++) {
    const c = source[i]!;
    const hex = source.slice(i + 1, i + 3);
    if (c === '=' && /^[0-9A-Fa-f]{2}$/.test(hex)) {
      out.push(parseInt(hex, 16));
      i += 2;
    } else {
      out.push(source.charCodeAt(i) & 0xff);
    }
  }
  return Buffer.from(out);
}

/** RFC 2047 encoded words, e.g. =?UTF-8?Q?Caf=C3=A9?=; white space between two words is dropped. */
export function decodeWords(value: string): string {
  return value
    .replace(/(=\?[^?]+\?[BbQq]\?[^?]*\?=)\s+(?==\?)/g, '$1')
    .replace(/=\?([^?*]+)(?:\*[^?]*)?\?([BbQq])\?([^?]*)\?=/g, (_m, charset: string, enc: string, data: string) => {
      const bytes = enc.toUpperCase() === 'B' ? Buffer.from(data, 'base64') : decodeQuotedPrintable(data, true);
      return decodeCharset(bytes, charset);
    });
}

/** Splits `type/sub; a=1; b="x y"` into the value and its parameters, joining RFC 2231 pieces. */
function parseParams(value: string): { value: string; params: Map<string, string> } {
  const parts: string[] = [];
  let cur = '';
  let quoted = false;
  for (const ch of value) {
    if (ch === '"') quoted = !quoted;
    if (ch === ';' && !quoted) {
      parts.push(cur);
      cur = '';
    } else cur += ch;
  }
  parts.push(cur);
  const params = new Map<string, string>();
  const continued = new Map<string, { index: number; text: string; encoded: boolean }[]>();
  for (const part of parts.slice(1)) {
    const eq = part.indexOf('=');
    if (eq === -1) continue;
    const key = part.slice(0, eq).trim().toLowerCase();
    let val = part.slice(eq + 1).trim();
    if (val.startsWith('"') && val.endsWith('"')) val = val.slice(1, -1).replace(/\\(.)/g, '$1');
    const m = /^([^*]+)(?:\*(\d+))?(\*)?$/.exec(key);
    if (m && (m[2] !== undefined || m[3] !== undefined)) {
      const list = continued.get(m[1]!) ?? [];
      list.push({ index: Number(m[2] ?? 0), text: val, encoded: m[3] !== undefined });
      continued.set(m[1]!, list);
    } else params.set(key, val);
  }
  for (const [key, pieces] of continued) {
    pieces.sort((a, b) => a.index - b.index);
    let charset = 'utf-8';
    const bytes: Buffer[] = [];
    for (const [i, p] of pieces.entries()) {
      let text = p.text;
      if (i === 0 && p.encoded) {
        const m = /^([^']*)'[^']*'(.*)$/.exec(text);
        if (m) [charset, text] = [m[1] || 'utf-8', m[2]!];
      }
      bytes.push(p.encoded ? Buffer.from(text.replace(/%([0-9A-Fa-f]{2})/g, (_s, h: string) => String.fromCharCode(parseInt(h, 16))), 'latin1') : Buffer.from(text, 'latin1'));
    }
    params.set(key, decodeCharset(Buffer.concat(bytes), charset));
  }
  return { value: parts[0]!.trim().toLowerCase(), params };
}

function decodeBody(body: Buffer, encoding: string): Buffer {
  switch (encoding.toLowerCase()) {
    case 'base64':
      return Buffer.from(body.toString('latin1').replace(/[^A-Za-z0-9+/=]/g, ''), 'base64');
    case 'quoted-printable':
      return decodeQuotedPrintable(body.toString('latin1'));
    default:
      return body;
  }
}

function splitMultipart(body: Buffer, boundary: string): Buffer[] {
  const text = body.toString('latin1');
  const delimiter = `--${boundary}`;
  const parts: Buffer[] = [];
  let pos = text.indexOf(delimiter);
  while (pos !== -1) {
    const afterDelim = pos + delimiter.length;
    if (text.startsWith('--', afterDelim)) break; // closing delimiter
    const start = text.indexOf('\n', afterDelim) + 1;
    const next = text.indexOf(`\n${delimiter}`, start);
    if (start === 0 || next === -1) break;
    const end = next > 0 && text[next - 1] === '\r' ? next - 1 : next;
    parts.push(body.subarray(start, end));
    pos = next + 1;
  }
  return parts;
}

function walk(raw: Buffer, into: { text: string[]; attachments: ParsedAttachment[] }, depth: number): Headers {
  const { head, body } = splitHeadAndBody(raw);
  const headers = parseHeaders(head);
  const type = parseParams(headers.get('content-type') ?? 'text/plain; charset=us-ascii');
  const disposition = parseParams(headers.get('content-disposition') ?? '');
  if (type.value.startsWith('multipart/') && depth < 10) {
    const boundary = type.params.get('boundary');
    if (boundary) for (const part of splitMultipart(body, boundary)) walk(part, into, depth + 1);
    return headers;
  }
  const content = decodeBody(body, headers.get('content-transfer-encoding') ?? '7bit');
  const filename = disposition.params.get('filename') ?? type.params.get('name');
  if (disposition.value === 'attachment' || filename) {
    into.attachments.push({ filename: decodeWords(filename ?? 'attachment.bin'), contentType: type.value, content });
  } else if (type.value === 'text/plain') {
    into.text.push(decodeCharset(content, type.params.get('charset') ?? 'us-ascii'));
  }
  return headers;
}

export function parseMail(raw: Buffer): ParsedMail {
  const into = { text: [] as string[], attachments: [] as ParsedAttachment[] };
  const headers = walk(raw, into, 0);
  const header = (name: string) => decodeWords(headers.get(name) ?? '');
  return {
    messageId: (headers.get('message-id') ?? '').trim(),
    from: header('from'),
    to: header('to'),
    subject: header('subject'),
    text: into.text.join('\n').replace(/\r\n/g, '\n'),
    attachments: into.attachments,
  };
}
