import { doubleCsrf } from 'csrf-csrf';

/**
 * Double-submit CSRF tokens bound to the session id: every POST/PUT/PATCH/DELETE must carry the
 * token in the x-csrf-token header. The token is handed out by GET /api/auth/csrf and /api/auth/me.
 */
export function createCsrf(secret: string, secure: boolean) {
  return doubleCsrf({
    getSecret: () => secret,
    getSessionIdentifier: (req) => req.session?.id ?? '',
    cookieName: secure ? '__Host-qp.csrf' : 'qp.csrf',
    cookieOptions: { sameSite: 'lax', secure, httpOnly: true, path: '/' },
    getCsrfTokenFromRequest: (req) => req.headers['x-csrf-token'],
    errorConfig: { statusCode: 403, message: 'Missing or stale form token; reload the page and try again', code: 'csrf' },
  });
}
export type Csrf = ReturnType<typeof createCsrf>;
