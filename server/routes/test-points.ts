import { Router } from 'express';
import type { Db } from '../db/client';
import { testPointCreateSchema, testPointOrderSchema, testPointUpdateSchema } from '../../shared/test-points';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/test-points';

/** The job's signal path: all staff read it, the bench edits it. */
export function testPointRoutes(db: Db): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');
  const bench = requireRole('owner', 'technician');
  const shopOf = (req: Parameters<typeof currentUser>[0]) => currentUser(req).shop.id;

  r.get('/jobs/:id/test-points', staff, async (req, res) => {
    res.json(await svc.listTestPoints(db, shopOf(req), idParam(req.params.id, 'Job')));
  });
  r.post('/jobs/:id/test-points', bench, async (req, res) => {
    const jobId = idParam(req.params.id, 'Job');
    res.status(201).json(await svc.createTestPoint(db, shopOf(req), jobId, parse(testPointCreateSchema, req.body)));
  });
  r.put('/jobs/:id/test-points/order', bench, async (req, res) => {
    const jobId = idParam(req.params.id, 'Job');
    res.json(await svc.reorderTestPoints(db, shopOf(req), jobId, parse(testPointOrderSchema, req.body).ids));
  });
  r.patch('/test-points/:id', bench, async (req, res) => {
    const id = idParam(req.params.id, 'Test point');
    res.json(await svc.updateTestPoint(db, shopOf(req), id, parse(testPointUpdateSchema, req.body)));
  });
  r.delete('/test-points/:id', bench, async (req, res) => {
    await svc.deleteTestPoint(db, shopOf(req), idParam(req.params.id, 'Test point'));
    res.status(204).end();
  });
  return r;
}
