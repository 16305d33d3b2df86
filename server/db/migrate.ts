import { sql } from 'drizzle-orm';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { fileURLToPath } from 'node:url';
import type { Db } from './client';

const migrationsFolder = fileURLToPath(new URL('../../drizzle', import.meta.url));

/** Advisory lock key for schema changes ("qpmigrat" as 8 bytes); any constant all nodes share will do. */
const MIGRATION_LOCK_KEY = 0x71706d6967726174n;

/**
 * Applies pending migrations. Several nodes (API servers, workers) may start at once against one
 * database; unguarded, each would apply the same migration and they deadlock or fail on
 * "already exists". So one node at a time holds a PostgreSQL advisory lock while it migrates; the
 * others wait, then find nothing left to do.
 */
export async function runMigrations(db: Db): Promise<void> {
  // The lock lives in a transaction on one pooled connection (released when it ends, even if this
  // process dies); the migrations themselves run on the pool's other connections meanwhile.
  await db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${MIGRATION_LOCK_KEY.toString()}::bigint)`);
    await migrate(db, { migrationsFolder });
  });
}
