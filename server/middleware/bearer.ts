import type { RequestHandler } from 'express';
import type { Db } from '../db/client';
import { HttpError } from '../http-error';
import { signInWithToken } from '../services/api-tokens';

/**
 * Signs a request in by its "Authorization: Bearer" token. Such a request carries no cookie a
 * browser could have sent on its own, so it needs no CSRF token; it is otherwise held to its
 * user's role and shop like a session.
 */
export function bearerToken(db: Db): RequestHandler {
  return async (req, _res, next) => {
    const header = req.headers.authorization;
    if (!header) return next();
    const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
    if (!m) return next(new HttpError(401, 'Send the token as "Authorization: Bearer <token>"', 'bad_token'));
    const signIn = await signInWithToken(db, m[1]!);
    req.user = signIn.user;
    req.apiToken = { id: signIn.tokenId, scope: signIn.scope };
    next();
  };
}

/** Account and sign-in routes are for people: a token cannot mint tokens, change passwords or users. */
const PEOPLE_ONLY = /^\/(auth|account|users|audit)(\/|$)/;
/** The only write an upload token may make. */
const CAPTURE_UPLOAD = /^\/jobs\/\d+\/captures\/?$/;

/**
 * What a token's scope allows: reading results with either scope, and uploading captures with the
 * upload scope. Everything else answers 403, before the route runs.
 */
export const tokenScopeGate: RequestHandler = (req, _res, next) => {
  const token = req.apiToken;
  if (!token) return next();
  if (PEOPLE_ONLY.test(req.path)) return next(new HttpError(403, 'API tokens cannot be used for sign-in, account or user routes', 'forbidden'));
  if (req.method === 'GET' || req.method === 'HEAD') return next();
  if (token.scope === 'upload_captures' && req.method === 'POST' && CAPTURE_UPLOAD.test(req.path)) return next();
  const allowed = token.scope === 'upload_captures' ? 'read results and upload captures' : 'read results';
  next(new HttpError(403, `This API token may only ${allowed}`, 'forbidden'));
};
