import type { SessionUser } from '../shared/auth';

declare module 'express-session' {
  interface SessionData {
    userId?: number;
    /** Set for anonymous visitors who asked for a CSRF token, so their session id stays stable. */
    startedAt?: number;
  }
}

declare module 'express-serve-static-core' {
  interface Request {
    user?: SessionUser;
  }
}
