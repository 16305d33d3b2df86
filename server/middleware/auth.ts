import type { RequestHandler } from 'express';
import type { Role } from '../../shared/roles';
import type { Db } from '../db/client';
import { HttpError } from '../http-error';
import { loadSessionUser } from '../services/auth';

/** Reads the signed-in user fresh from the database, so a deactivated account stops at once. */
export function loadUser(db: Db): RequestHandler {
  return async (req, _res, next) => {
    const id = req.session?.userId;
    if (id) {
      const user = await loadSessionUser(db, id);
      if (user) req.user = user;
      else delete req.session.userId;
    }
    next();
  };
}

/** Allows only the given roles; anonymous gets 401, a signed-in user of another role 403. */
export function requireRole(...roles: Role[]): RequestHandler {
  return (req, _res, next) => {
    if (!req.user) return next(new HttpError(401, 'Sign in first', 'unauthenticated'));
    if (!roles.includes(req.user.role)) {
      return next(new HttpError(403, 'Your role does not allow this', 'forbidden'));
    }
    next();
  };
}

export const requireSignedIn: RequestHandler = (req, _res, next) => {
  if (!req.user) return next(new HttpError(401, 'Sign in first', 'unauthenticated'));
  next();
};

/** The signed-in user, for handlers behind requireRole/requireSignedIn. */
export function currentUser(req: Parameters<RequestHandler>[0]) {
  if (!req.user) throw new HttpError(401, 'Sign in first', 'unauthenticated');
  return req.user;
}
