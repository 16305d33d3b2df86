import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { randomBytes } from 'node:crypto';
import http from 'node:http';
import https from 'node:https';
import { Readable } from 'node:stream';

export interface UploadAnswer {
  status: number;
  body: string;
}

/**
 * POSTs form fields and files as multipart/form-data (RFC 7578), streamed from disk so a large
 * capture is never held in memory, calling onProgress with the bytes sent so far.
 */
export async function postMultipart(
  url: string,
  headers: Record<string, string>,
  fields: Record<string, string>,
  files: { field: string; path: string; type: string }[],
  onProgress: (sent: number, total: number) => void,
): Promise<UploadAnswer> {
  const boundary = `----qp${randomBytes(12).toString('hex')}`;
  const quote = (s: string) => s.replace(/["\r\n\\]/g, (c) => encodeURIComponent(c));
  const parts: (Buffer | { path: string; size: number })[] = [];
  for (const [name, value] of Object.entries(fields)) {
    parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${quote(name)}"\r\n\r\n${value}\r\n`));
  }
  for (const f of files) {
    const size = (await stat(f.path)).size;
    parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${quote(f.field)}"; filename="${quote(basename(f.path))}"\r\nContent-Type: ${f.type}\r\n\r\n`));
    parts.push({ path: f.path, size });
    parts.push(Buffer.from('\r\n'));
  }
  parts.push(Buffer.from(`--${boundary}--\r\n`));
  const total = parts.reduce((n, p) => n + (Buffer.isBuffer(p) ? p.length : p.size), 0);

  let sent = 0;
  const body = Readable.from(
    (async function* () {
      for (const p of parts) {
        if (Buffer.isBuffer(p)) {
          sent += p.length;
          yield p;
          continue;
        }
        for await (const chunk of createReadStream(p.path, { highWaterMark: 1 << 20 })) {
          sent += (chunk as Buffer).length;
          onProgress(sent, total);
          yield chunk as Buffer;
        }
      }
      onProgress(sent, total);
    })(),
  );

  const target = new URL(url);
  const client = target.protocol === 'https:' ? https : http;
  return new Promise<UploadAnswer>((resolve, reject) => {
    let answered = false;
    const req = client.request(
      target,
      { method: 'POST', headers: { ...headers, 'content-type': `multipart/form-data; boundary=${boundary}`, 'content-length': String(total) } },
      (res) => {
        answered = true;
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
        res.on('error', reject);
      },
    );
    // The server may answer (e.g. 413) before the whole body is sent and close the connection;
    // then the answer is what counts, not the broken pipe.
    req.on('error', (err) => {
      if (!answered) reject(err);
    });
    body.on('error', reject);
    body.pipe(req);
  });
}
