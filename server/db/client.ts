import pg from 'pg';
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import * as schema from './schema/index';

export type Db = NodePgDatabase<typeof schema>;
/** A database handle or an open transaction on it: services accept either. */
export type DbOrTx = Db | Parameters<Parameters<Db['transaction']>[0]>[0];

export function createDb(url: string): { pool: pg.Pool; db: Db } {
  const pool = new pg.Pool({ connectionString: url, max: 10 });
  // An idle client that loses its server (e.g. PostgreSQL restarted) must not crash the process.
  pool.on('error', (err) => console.error('PostgreSQL pool error:', err.message));
  const db = drizzle(pool, { schema, casing: 'snake_case' });
  return { pool, db };
}
