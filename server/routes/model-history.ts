import { Router } from 'express';
import type { Db } from '../db/client';
import { modelHistoryQuerySchema } from '../../shared/model-history';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import { jobForViewer } from '../services/job-access';
import { historyForJob, historyForModel } from '../services/model-history';

/** Earlier jobs on the same maker and model: staff only, as they span customers. */
export function modelHistoryRoutes(db: Db): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');

  r.get('/model-history', staff, async (req, res) => {
    const q = parse(modelHistoryQuerySchema, req.query);
    res.json(await historyForModel(db, currentUser(req).shop.id, q.maker, q.model));
  });
  r.get('/jobs/:id/model-history', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    res.json(await historyForJob(db, job.shopId, job.id));
  });
  return r;
}
