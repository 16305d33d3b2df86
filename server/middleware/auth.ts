import type { RequestHandler } from 'express';
import { ROLES, type Role } from '../../shared/roles';
import type { Db } from '../db/client';
import { HttpError } from '../http-error';
import { loadSessionUser } from '../services/auth';
import type { SignedInCache } from '../services/signed-in-cache';

/**
 * Puts the signed-in user on the request: read from the database, or from the signed-in cache,
 * which this server empties for a user whenever it changes their role, password or standing, so
 * a switched-off account stops at once.
 */
export function loadUser(db: Db, cache: SignedInCache): RequestHandler {
  return async (req, _res, next) => {
    const id = req.session?.userId;
    if (req.apiToken) return next();
    if (id) {
      let user = cache.user(id);
      if (user === undefined) {
        const generation = cache.generation;
        user = await loadSessionUser(db, id);
        cache.putUser(id, user, generation);
      }
      if (user) req.user = user;
      else delete req.session.userId;
    }
    next();
  };
}

/** A role check that also tells the route catalogue which roles it lets through. */
export type RoleGate = RequestHandler & { allowedRoles: readonly Role[] };

/** Allows only the given roles; anonymous gets 401, a signed-in user of another role 403. */
export function requireRole(...roles: Role[]): RoleGate {
  const gate: RequestHandler = (req, _res, next) => {
    if (!req.user) return next(new HttpError(401, 'Sign in first', 'unauthenticated'));
    if (!roles.includes(req.user.role)) {
      return next(new HttpError(403, 'Your role does not allow this', 'forbidden'));
    }
    next();
  };
  return Object.assign(gate, { allowedRoles: roles });
}

/** Any signed-in role; what each may see is then narrowed by the service (e.g. a customer's own rows). */
export const requireSignedIn: RoleGate = requireRole(...ROLES);

/** The signed-in user, for handlers behind requireRole/requireSignedIn. */
export function currentUser(req: Parameters<RequestHandler>[0]) {
  if (!req.user) throw new HttpError(401, 'Sign in first', 'unauthenticated');
  return req.user;
}
