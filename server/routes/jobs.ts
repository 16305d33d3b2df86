import { Router } from 'express';
import type { Db } from '../db/client';
import { currentUser, requireSignedIn } from '../middleware/auth';
import { listJobs } from '../services/jobs';

export function jobRoutes(db: Db): Router {
  const r = Router();
  r.get('/jobs', requireSignedIn, async (req, res) => {
    res.json(await listJobs(db, currentUser(req)));
  });
  return r;
}
