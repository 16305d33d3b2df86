import { Router } from 'express';
import type { Db } from '../db/client';
import { apiTokenCreateSchema } from '../../shared/api-tokens';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/api-tokens';

/** Personal API tokens for bench scripts: the bench roles make their own, the owner may revoke any. */
export function apiTokenRoutes(db: Db): Router {
  const r = Router();
  const bench = requireRole('owner', 'technician');

  r.get('/account/tokens', bench, async (req, res) => {
    res.json(await svc.listTokens(db, currentUser(req)));
  });
  r.post('/account/tokens', bench, async (req, res) => {
    res.status(201).json(await svc.createToken(db, currentUser(req), parse(apiTokenCreateSchema, req.body)));
  });
  r.delete('/account/tokens/:id', bench, async (req, res) => {
    res.json(await svc.revokeToken(db, currentUser(req), idParam(req.params.id, 'Token')));
  });
  return r;
}
