import express, { type Express } from 'express';
import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import helmet from 'helmet';
import cookieParser from 'cookie-parser';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type pg from 'pg';
import type { Config } from './config';
import type { Db } from './db/client';
import { createCsrf } from './middleware/csrf';
import { loadUser } from './middleware/auth';
import { bearerToken, tokenScopeGate } from './middleware/bearer';
import { apiTokenRoutes } from './routes/api-tokens';
import { modelHistoryRoutes } from './routes/model-history';
import { searchRoutes } from './routes/search';
import { apiNotFound, errorHandler } from './middleware/errors';
import { authRoutes } from './routes/auth';
import { healthRoutes } from './routes/health';
import { customerRoutes } from './routes/customers';
import { jobRoutes } from './routes/jobs';
import { testPointRoutes } from './routes/test-points';
import { repairLogRoutes } from './routes/repair-log';
import { specSheetRoutes } from './routes/spec-sheets';
import { userRoutes } from './routes/users';
import { captureAudioRoutes } from './routes/capture-audio';
import { captureRoutes } from './routes/captures';
import { measurementRoutes } from './routes/measurements';
import { calibrationRoutes } from './routes/calibrations';
import { recordingRoutes, signalRoutes } from './routes/recordings';
import type { FileStore } from './storage/file-store';
import type { AnalysisQueue } from './services/analysis-queue';
import { CachedSessionStore } from './services/cached-session-store';
import type { SignedInCache } from './services/signed-in-cache';
import type { BillingRuntime } from './billing-runtime';
import { billingRoutes, paymentWebhookRoutes } from './routes/payments';

export interface AppDeps {
  config: Config;
  db: Db;
  pool: pg.Pool;
  /** The capture-analysis queue that uploads add their jobs to. */
  queue: AnalysisQueue;
  /** Mail and payment clients (real, or the local stand-ins). */
  billing: BillingRuntime;
  /** Where captures and recording chunks are stored. */
  store: FileStore;
  /** Who is signed in, remembered between requests (shared with other nodes by main.ts). */
  signedIn: SignedInCache;
}

export const SESSION_COOKIE = 'qp.sid';
const SESSION_HOURS = 12;

export function createApp({ config, db, pool, queue, billing, store, signedIn }: AppDeps): Express {
  const app = express();
  app.disable('x-powered-by');
  app.set('etag', false);
  app.set('trust proxy', 'loopback');
  app.use(helmet({ contentSecurityPolicy: { directives: { 'img-src': ["'self'", 'data:', 'blob:'] } } }));

  app.use(cookieParser());
  const PgStore = connectPgSimple(session);
  app.use(
    session({
      name: SESSION_COOKIE,
      secret: config.SESSION_SECRET,
      store: new CachedSessionStore(
        new PgStore({ pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 600, disableTouch: true }),
        signedIn,
      ),
      resave: false,
      saveUninitialized: false,
      // A fixed 12-hour working-day session: no touch write on every request, which keeps reads cheap.
      rolling: false,
      cookie: { httpOnly: true, sameSite: 'lax', secure: config.COOKIE_SECURE, maxAge: SESSION_HOURS * 3600_000 },
    }),
  );

  // Before the API router: the webhook needs its raw body and is exempt from CSRF (see the route).
  app.use(paymentWebhookRoutes(db, billing));
  const csrf = createCsrf(config.SESSION_SECRET, config.COOKIE_SECURE);
  const api = express.Router();
  // API answers are one user's data at one moment: never stored by browsers or proxies, so no
  // validators either (an ETag costs a hash of every body).
  api.use((_req, res, next) => {
    res.setHeader('Cache-Control', 'private, no-store');
    next();
  });
  api.use(express.json({ limit: '1mb' }));
  api.use('/health', healthRoutes(db));
  api.use(bearerToken(db));
  // A token request carries no cookie a browser could send by itself, so it needs no CSRF token.
  api.use((req, res, next) => (req.apiToken ? next() : csrf.doubleCsrfProtection(req, res, next)));
  api.use(loadUser(db, signedIn));
  api.use(tokenScopeGate);
  api.use('/auth', authRoutes(db, csrf));
  api.use(customerRoutes(db));
  api.use(jobRoutes(db));
  api.use(testPointRoutes(db));
  api.use(repairLogRoutes(db));
  api.use(specSheetRoutes(db));
  api.use(userRoutes(db, signedIn));
  api.use(apiTokenRoutes(db));
  api.use(modelHistoryRoutes(db));
  api.use(searchRoutes(db));
  api.use(captureRoutes(db, config, queue, store));
  api.use(captureAudioRoutes(db, store));
  api.use(measurementRoutes(db));
  api.use(calibrationRoutes(db));
  api.use(recordingRoutes(db, config, queue, store));
  api.use(signalRoutes());
  api.use(billingRoutes(db, billing, signedIn));
  api.use(apiNotFound);
  app.use('/api', api);

  if (config.WEB_DIST && existsSync(join(config.WEB_DIST, 'index.html'))) {
    const dist = config.WEB_DIST;
    app.use(express.static(dist, { index: false, maxAge: '1h' }));
    // The web app routes on the client: any other GET gets its page.
    app.get(/^(?!\/api\/).*/, (_req, res) => res.sendFile(join(dist, 'index.html')));
  }
  app.use(errorHandler);
  return app;
}
