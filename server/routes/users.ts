import { Router } from 'express';
import { passwordChangeSchema, passwordResetSchema, userCreateSchema, userUpdateSchema } from '../../shared/users';
import type { Db } from '../db/client';
import { currentUser, requireRole, requireSignedIn } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/users';

/** The owner manages the shop's sign-ins; everyone may change their own password. */
export function userRoutes(db: Db): Router {
  const r = Router();
  const owner = requireRole('owner');

  r.get('/users', owner, async (req, res) => {
    res.json(await svc.listUsers(db, currentUser(req).shop.id));
  });
  r.post('/users', owner, async (req, res) => {
    const me = currentUser(req);
    res.status(201).json(await svc.createUser(db, me.shop.id, me.id, parse(userCreateSchema, req.body)));
  });
  r.patch('/users/:id', owner, async (req, res) => {
    const me = currentUser(req);
    res.json(await svc.updateUser(db, me.shop.id, me.id, idParam(req.params.id, 'User'), parse(userUpdateSchema, req.body)));
  });
  r.post('/users/:id/password', owner, async (req, res) => {
    const me = currentUser(req);
    const { newPassword } = parse(passwordResetSchema, req.body);
    await svc.setPassword(db, me.shop.id, me.id, idParam(req.params.id, 'User'), newPassword);
    res.status(204).end();
  });
  r.post('/account/password', requireSignedIn, async (req, res) => {
    const me = currentUser(req);
    const body = parse(passwordChangeSchema, req.body);
    await svc.changeOwnPassword(db, me.shop.id, me.id, body.currentPassword, body.newPassword, req.session.id);
    res.status(204).end();
  });
  r.get('/audit/sign-ins', owner, async (req, res) => {
    res.json(await svc.listSignIns(db, currentUser(req).shop.id));
  });
  r.get('/audit/events', owner, async (req, res) => {
    res.json(await svc.listAudit(db, currentUser(req).shop.id));
  });
  return r;
}
