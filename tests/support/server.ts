import { inject } from 'vitest';
import { startServer, type RunningServer } from '../../server/main';
import { createDb, type Db } from '../../server/db/client';

/** A real server on a free port against the run's throwaway database. */
export async function startTestServer(extraEnv: Record<string, string> = {}): Promise<RunningServer> {
  return startServer({
    DATABASE_URL: inject('databaseUrl'),
    HOST: '127.0.0.1',
    PORT: '0',
    SESSION_SECRET: 'test-secret-of-sufficient-length-0123456789',
    // One files folder for every test server: the analysis worker of whichever server is running
    // must find the files of captures queued by another (and the seeded demo captures).
    FILES_DIR: inject('filesDir'),
    NODE_ENV: 'test',
    // No engine warm-up: a test server takes jobs at once, as it always has. Test files share
    // the queue, and a server that waited would leave its captures longer to the workers of
    // tests with their own files (faults, several nodes). analysis-worker.test.ts turns it on.
    ANALYSIS_WARM_UP_SECONDS: '0',
    ...extraEnv,
  });
}

/** Direct database access for setting up a test's own rows. */
export function testDb(): { db: Db; close(): Promise<void> } {
  const { db, pool } = createDb(inject('databaseUrl'));
  return { db, close: () => pool.end() };
}
