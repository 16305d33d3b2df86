import { Router } from 'express';
import type { Db } from '../db/client';
import { calibrationInputSchema } from '../../shared/calibrations';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/calibrations';

/** Calibration profiles are bench equipment: the technician and the owner keep them. */
export function calibrationRoutes(db: Db): Router {
  const r = Router();
  const bench = requireRole('owner', 'technician');
  const shopOf = (req: Parameters<typeof currentUser>[0]) => currentUser(req).shop.id;

  r.get('/calibrations', bench, async (req, res) => {
    res.json(await svc.listCalibrations(db, shopOf(req)));
  });
  r.post('/calibrations', bench, async (req, res) => {
    const user = currentUser(req);
    res.status(201).json(await svc.createCalibration(db, user.shop.id, user.id, parse(calibrationInputSchema, req.body)));
  });
  r.get('/calibrations/:id', bench, async (req, res) => {
    res.json(await svc.getCalibration(db, shopOf(req), idParam(req.params.id, 'Calibration profile')));
  });
  r.put('/calibrations/:id', bench, async (req, res) => {
    const id = idParam(req.params.id, 'Calibration profile');
    res.json(await svc.updateCalibration(db, shopOf(req), id, parse(calibrationInputSchema, req.body)));
  });
  r.delete('/calibrations/:id', bench, async (req, res) => {
    await svc.deleteCalibration(db, shopOf(req), idParam(req.params.id, 'Calibration profile'));
    res.status(204).end();
  });
  return r;
}
