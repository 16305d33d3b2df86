import { Router } from 'express';
import { createInvoiceSchema, invoiceListQuerySchema, recordPaymentSchema, updateInvoiceSchema, voidInvoiceSchema } from '../../shared/billing';
import type { Db } from '../db/client';
import type { BillingRuntime } from '../billing-runtime';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as actions from '../services/invoice-actions';
import { getInvoiceFor, listInvoices } from '../services/invoices';
import { renderInvoicePdf } from '../pdf/invoice';
import { sendPdf } from './pdf-response';

/** Invoices: the desk and the owner make, send and settle them; a customer reads their own. */
export function invoiceRoutes(db: Db, runtime: BillingRuntime): Router {
  const r = Router();
  const desk = requireRole('owner', 'front_desk');
  const readers = requireRole('owner', 'front_desk', 'customer');

  r.get('/invoices', desk, async (req, res) => {
    const q = parse(invoiceListQuerySchema, req.query);
    res.json(await listInvoices(db, currentUser(req).shop.id, q));
  });
  r.post('/invoices', desk, async (req, res) => {
    res.status(201).json(await actions.createInvoiceFromJob(db, currentUser(req), parse(createInvoiceSchema, req.body)));
  });
  r.get('/invoices/:id', readers, async (req, res) => {
    res.json(await getInvoiceFor(db, currentUser(req), idParam(req.params.id, 'Invoice')));
  });
  r.put('/invoices/:id', desk, async (req, res) => {
    const id = idParam(req.params.id, 'Invoice');
    res.json(await actions.updateDraft(db, currentUser(req), id, parse(updateInvoiceSchema, req.body)));
  });
  r.post('/invoices/:id/send', desk, async (req, res) => {
    res.json(await actions.sendInvoice(db, runtime, currentUser(req), idParam(req.params.id, 'Invoice')));
  });
  r.post('/invoices/:id/email', desk, async (req, res) => {
    res.json(await actions.emailInvoiceAgain(db, runtime, currentUser(req), idParam(req.params.id, 'Invoice')));
  });
  r.post('/invoices/:id/void', desk, async (req, res) => {
    const id = idParam(req.params.id, 'Invoice');
    res.json(await actions.voidInvoice(db, currentUser(req), id, parse(voidInvoiceSchema, req.body).reason));
  });
  r.post('/invoices/:id/payments', desk, async (req, res) => {
    const id = idParam(req.params.id, 'Invoice');
    res.json(await actions.recordCounterPayment(db, runtime, currentUser(req), id, parse(recordPaymentSchema, req.body)));
  });
  r.get('/invoices/:id/invoice.pdf', readers, async (req, res) => {
    const invoice = await getInvoiceFor(db, currentUser(req), idParam(req.params.id, 'Invoice'));
    sendPdf(res, `invoice-${invoice.reference}.pdf`, await renderInvoicePdf(db, currentUser(req).shop.id, invoice.id));
  });
  return r;
}
