/**
 * Several nodes starting at once against one new database: each runs the migrations, one at a
 * time under an advisory lock, instead of deadlocking or failing on objects another just made.
 */
import { describe, expect, inject, it } from 'vitest';
import pg from 'pg';
import { createDb } from '../../server/db/client';
import { runMigrations } from '../../server/db/migrate';

describe('migrations from nodes starting together', () => {
  it('three nodes migrate one new database at once; all succeed and the schema is whole', async () => {
    const url = new URL(inject('databaseUrl'));
    const name = `migrate_race_${process.pid}`;
    const admin = new pg.Client({ connectionString: url.toString() });
    await admin.connect();
    await admin.query(`create database "${name}"`);
    url.pathname = `/${name}`;
    const nodes = [createDb(url.toString()), createDb(url.toString()), createDb(url.toString())];
    try {
      const outcomes = await Promise.allSettled(nodes.map((n) => runMigrations(n.db)));
      expect(outcomes.map((o) => (o.status === 'rejected' ? String(o.reason) : 'ok'))).toEqual(['ok', 'ok', 'ok']);
      const applied = await nodes[0]!.pool.query('select count(*)::int as n from drizzle.__drizzle_migrations');
      const journal = (await import('../../drizzle/meta/_journal.json', { with: { type: 'json' } })).default as { entries: unknown[] };
      expect(applied.rows[0].n).toBe(journal.entries.length);
    } finally {
      await Promise.all(nodes.map((n) => n.pool.end()));
      await admin.query(`drop database "${name}"`);
      await admin.end();
    }
  });
});
