import { Router } from 'express';
import { createQuoteSchema, declineQuoteSchema } from '../../shared/billing';
import type { Db } from '../db/client';
import type { BillingRuntime } from '../billing-runtime';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/quotes';

/** Estimates: the desk sends and withdraws, the customer approves or declines their own. */
export function quoteRoutes(db: Db, runtime: BillingRuntime): Router {
  const r = Router();
  const desk = requireRole('owner', 'front_desk');
  const customer = requireRole('customer');

  r.post('/quotes', desk, async (req, res) => {
    res.status(201).json(await svc.sendQuote(db, runtime, currentUser(req), parse(createQuoteSchema, req.body)));
  });
  r.post('/quotes/:id/withdraw', desk, async (req, res) => {
    res.json(await svc.withdrawQuote(db, currentUser(req), idParam(req.params.id, 'Estimate')));
  });
  r.post('/my/quotes/:id/approve', customer, async (req, res) => {
    res.json(await svc.approveQuote(db, currentUser(req), idParam(req.params.id, 'Estimate')));
  });
  r.post('/my/quotes/:id/decline', customer, async (req, res) => {
    const id = idParam(req.params.id, 'Estimate');
    res.json(await svc.declineQuote(db, currentUser(req), id, parse(declineQuoteSchema, req.body).reason));
  });
  return r;
}
