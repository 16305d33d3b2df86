import { Router } from 'express';
import type { Db } from '../db/client';
import { specSheetInputSchema, specSheetListQuerySchema } from '../../shared/specs';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/spec-sheets';

/** Published figures per maker and model: all staff read, the bench and the owner write. */
export function specSheetRoutes(db: Db): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');
  const bench = requireRole('owner', 'technician');
  const sheetId = (v: unknown) => idParam(v, 'Spec sheet');

  r.get('/spec-sheets', staff, async (req, res) => {
    res.json(await svc.listSheets(db, currentUser(req).shop.id, parse(specSheetListQuerySchema, req.query).q));
  });
  r.get('/spec-sheets/:id', staff, async (req, res) => {
    res.json(await svc.getSheet(db, currentUser(req).shop.id, sheetId(req.params.id)));
  });
  r.post('/spec-sheets', bench, async (req, res) => {
    res.status(201).json(await svc.createSheet(db, currentUser(req).shop.id, parse(specSheetInputSchema, req.body)));
  });
  r.put('/spec-sheets/:id', bench, async (req, res) => {
    const id = sheetId(req.params.id);
    res.json(await svc.updateSheet(db, currentUser(req).shop.id, id, parse(specSheetInputSchema, req.body)));
  });
  r.delete('/spec-sheets/:id', bench, async (req, res) => {
    await svc.deleteSheet(db, currentUser(req).shop.id, sheetId(req.params.id));
    res.status(204).end();
  });
  r.get('/units/:id/spec-sheet', staff, async (req, res) => {
    res.json(await svc.sheetForUnit(db, currentUser(req).shop.id, idParam(req.params.id, 'Unit')));
  });
  return r;
}
