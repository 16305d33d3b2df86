import { Router } from 'express';
import { loginRequestSchema } from '../../shared/auth';
import type { Db } from '../db/client';
import type { Csrf } from '../middleware/csrf';
import { parse } from '../middleware/validate';
import { requireSignedIn, currentUser } from '../middleware/auth';
import { signIn } from '../services/auth';

export function authRoutes(db: Db, csrf: Csrf): Router {
  const r = Router();

  // Anonymous visitors need a stable session to bind the sign-in form's token to.
  r.get('/csrf', (req, res) => {
    req.session.startedAt ??= Date.now();
    res.json({ csrfToken: csrf.generateCsrfToken(req, res, { overwrite: true }) });
  });

  r.post('/login', async (req, res) => {
    const { email, password } = parse(loginRequestSchema, req.body);
    const user = await signIn(db, email, password, req.ip ?? 'unknown');
    // A new session id at sign-in, so an id planted before sign-in is worthless afterwards.
    await new Promise<void>((resolve, reject) => req.session.regenerate((e) => (e ? reject(e) : resolve())));
    req.session.userId = user.id;
    await new Promise<void>((resolve, reject) => req.session.save((e) => (e ? reject(e) : resolve())));
    res.json({ user, csrfToken: csrf.generateCsrfToken(req, res, { overwrite: true }) });
  });

  r.post('/logout', async (req, res) => {
    await new Promise<void>((resolve, reject) => req.session.destroy((e) => (e ? reject(e) : resolve())));
    res.clearCookie('qp.sid');
    res.status(204).end();
  });

  r.get('/me', requireSignedIn, (req, res) => {
    res.json({ user: currentUser(req), csrfToken: csrf.generateCsrfToken(req, res) });
  });

  return r;
}
