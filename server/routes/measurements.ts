import { Router, type Response } from 'express';
import type { Db } from '../db/client';
import { compareQuerySchema } from '../../shared/compare';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import { jobForViewer } from '../services/job-access';
import { compareForJob, signalPathForJob } from '../services/measurements';
import { crosstalkForJob, setCrosstalkReferences } from '../services/input-crosstalk';
import { crosstalkReferencesSchema } from '../../shared/input-crosstalk-compare';
import { listCaptures } from '../services/captures';
import { figuresCsv, signalPathCsv } from '../services/csv-export';
import { jobReference } from '../services/jobs';

function sendCsv(res: Response, filename: string, body: string): void {
  res.type('text/csv; charset=utf-8');
  res.attachment(filename);
  res.send(body);
}

/** Read-only views over a job's measured captures: the signal path and before/after. */
export function measurementRoutes(db: Db): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');

  r.get('/jobs/:id/signal-path', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    res.json(await signalPathForJob(db, job.shopId, job.id));
  });
  r.get('/jobs/:id/signal-path.csv', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    const ref = jobReference(job.id);
    sendCsv(res, `${ref}-signal-path.csv`, signalPathCsv(ref, await signalPathForJob(db, job.shopId, job.id)));
  });
  r.get('/jobs/:id/figures.csv', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    const ref = jobReference(job.id);
    sendCsv(res, `${ref}-figures.csv`, figuresCsv(ref, await listCaptures(db, job.shopId, job.id)));
  });
  r.get('/jobs/:id/compare', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    res.json(await compareForJob(db, job.shopId, job.id, parse(compareQuerySchema, req.query)));
  });
  r.get('/jobs/:id/input-crosstalk', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    res.json(await crosstalkForJob(db, job.shopId, job.id));
  });
  r.put('/jobs/:id/input-crosstalk/references', requireRole('owner', 'technician'), async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    await setCrosstalkReferences(db, job.shopId, job.id, parse(crosstalkReferencesSchema, req.body));
    res.json(await crosstalkForJob(db, job.shopId, job.id));
  });
  return r;
}
