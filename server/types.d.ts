import type { SessionUser } from '../shared/auth';
import type { ApiTokenScope } from '../shared/api-tokens';

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
    /** Set when the request signed in with an API token rather than a session. */
    apiToken?: { id: number; scope: ApiTokenScope };
  }
}
