import { Router } from 'express';
import type { Db } from '../db/client';
import type { BillingRuntime } from '../billing-runtime';
import { currentUser, requireRole, requireSignedIn } from '../middleware/auth';
import { idParam } from '../middleware/validate';
import { getMyJob, listMyJobs, listMyUnits } from '../services/portal';
import { startCheckout } from '../services/payments';
import { jobForViewer } from '../services/job-access';
import { renderEvidencePdf } from '../pdf/evidence';
import { sendPdf } from './pdf-response';

/** The customer's own view, and the evidence report that staff and the job's customer can open. */
export function portalRoutes(db: Db, runtime: BillingRuntime): Router {
  const r = Router();
  const customer = requireRole('customer');

  r.get('/my/jobs', customer, async (req, res) => {
    res.json(await listMyJobs(db, currentUser(req)));
  });
  r.get('/my/jobs/:id', customer, async (req, res) => {
    res.json(await getMyJob(db, currentUser(req), idParam(req.params.id, 'Job')));
  });
  r.get('/my/units', customer, async (req, res) => {
    res.json(await listMyUnits(db, currentUser(req)));
  });
  r.post('/my/invoices/:id/pay', customer, async (req, res) => {
    res.json(await startCheckout(db, runtime, currentUser(req), idParam(req.params.id, 'Invoice')));
  });
  r.get('/jobs/:id/evidence.pdf', requireSignedIn, async (req, res) => {
    const viewer = currentUser(req);
    const job = await jobForViewer(db, viewer, idParam(req.params.id, 'Job'));
    sendPdf(res, `evidence-J-${String(job.id).padStart(4, '0')}.pdf`, await renderEvidencePdf(db, viewer.shop.id, job.id));
  });
  return r;
}
