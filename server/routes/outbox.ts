import { Router } from 'express';
import { z } from 'zod';
import type { Db } from '../db/client';
import type { BillingRuntime } from '../billing-runtime';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import { getAttachment, getOutboxMessage, listOutbox, retryEmail } from '../services/outbox';
import { sendReadyForCollection } from '../services/customer-notices';
import { getJobBilling } from '../services/portal';

const outboxQuery = z.object({ jobId: z.coerce.number().int().positive().max(2 ** 31 - 1).optional() });

/** The shop's sent mail, and the money side of a job, for the owner and the desk. */
export function outboxRoutes(db: Db, runtime: BillingRuntime): Router {
  const r = Router();
  const desk = requireRole('owner', 'front_desk');

  r.get('/outbox', desk, async (req, res) => {
    res.json(await listOutbox(db, currentUser(req).shop.id, parse(outboxQuery, req.query)));
  });
  r.get('/outbox/:id', desk, async (req, res) => {
    res.json(await getOutboxMessage(db, currentUser(req).shop.id, idParam(req.params.id, 'Message')));
  });
  r.post('/outbox/:id/retry', desk, async (req, res) => {
    res.json(await retryEmail(db, runtime.mailer, currentUser(req).shop.id, idParam(req.params.id, 'Message')));
  });
  r.get('/outbox/:id/attachments/:index', desk, async (req, res) => {
    const id = idParam(req.params.id, 'Message');
    const index = /^\d{1,3}$/.test(String(req.params.index)) ? Number(req.params.index) : -1;
    const file = await getAttachment(db, currentUser(req).shop.id, id, index);
    res.attachment(file.filename);
    res.type(file.contentType || 'application/octet-stream');
    res.setHeader('Cache-Control', 'private, no-store');
    res.send(file.content);
  });
  r.get('/billing/jobs/:id', desk, async (req, res) => {
    res.json(await getJobBilling(db, currentUser(req).shop.id, idParam(req.params.id, 'Job')));
  });
  r.post('/billing/jobs/:id/ready-notice', desk, async (req, res) => {
    res.status(201).json(await sendReadyForCollection(db, runtime, currentUser(req), idParam(req.params.id, 'Job')));
  });
  return r;
}
