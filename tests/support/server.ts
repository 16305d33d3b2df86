import { inject } from 'vitest';
import { mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { startServer, type RunningServer } from '../../server/main';
import { createDb, type Db } from '../../server/db/client';

/** A real server on a free port against the run's throwaway database. */
export async function startTestServer(extraEnv: Record<string, string> = {}): Promise<RunningServer> {
  const scratch = inject('scratchDir');
  return startServer({
    DATABASE_URL: inject('databaseUrl'),
    HOST: '127.0.0.1',
    PORT: '0',
    SESSION_SECRET: 'test-secret-of-sufficient-length-0123456789',
    FILES_DIR: mkdtempSync(join(scratch, 'files-')),
    NODE_ENV: 'test',
    ...extraEnv,
  });
}

/** Direct database access for setting up a test's own rows. */
export function testDb(): { db: Db; close(): Promise<void> } {
  const { db, pool } = createDb(inject('databaseUrl'));
  return { db, close: () => pool.end() };
}
