import type { Response } from 'express';

/** A private PDF shown in the browser's viewer, never cached by anything in between. */
export function sendPdf(res: Response, filename: string, pdf: Buffer): void {
  res.setHeader('Content-Type', 'application/pdf');
  res.setHeader('Content-Disposition', `inline; filename="${filename.replace(/[^A-Za-z0-9._-]/g, '_')}"`);
  res.setHeader('Cache-Control', 'private, no-store');
  res.send(pdf);
}
