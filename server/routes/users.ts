import { Router } from 'express';
import { passwordChangeSchema, passwordResetSchema, userCreateSchema, userUpdateSchema } from '../../shared/users';
import type { Db } from '../db/client';
import { currentUser, requireRole, requireSignedIn } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/users';
import type { SignedInCache } from '../services/signed-in-cache';

/** The owner manages the shop's sign-ins; everyone may change their own password. */
export function userRoutes(db: Db, signedIn: SignedInCache): Router {
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
    const id = idParam(req.params.id, 'User');
    const updated = await svc.updateUser(db, me.shop.id, me.id, id, parse(userUpdateSchema, req.body));
    signedIn.forgetUser(id);
    res.json(updated);
  });
  r.post('/users/:id/password', owner, async (req, res) => {
    const me = currentUser(req);
    const { newPassword } = parse(passwordResetSchema, req.body);
    const id = idParam(req.params.id, 'User');
    await svc.setPassword(db, me.shop.id, me.id, id, newPassword);
    signedIn.forgetUser(id);
    res.status(204).end();
  });
  r.post('/account/password', requireSignedIn, async (req, res) => {
    const me = currentUser(req);
    const body = parse(passwordChangeSchema, req.body);
    await svc.changeOwnPassword(db, me.shop.id, me.id, body.currentPassword, body.newPassword, req.session.id);
    signedIn.forgetUser(me.id);
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
