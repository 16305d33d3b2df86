import type { DbOrTx } from './client';

/**
 * Named prepared statements, built once per database handle and name. For the busiest reads:
 * building a query's SQL in drizzle costs more CPU than running it, and a named statement lets
 * PostgreSQL skip parsing and, after a few runs, planning. The name must capture everything that
 * changes the SQL text; values travel as placeholders.
 */
const byHandle = new WeakMap<object, Map<string, unknown>>();

export function prepared<T>(db: DbOrTx, name: string, build: (name: string) => T): T {
  let statements = byHandle.get(db);
  if (!statements) byHandle.set(db, (statements = new Map()));
  let statement = statements.get(name) as T | undefined;
  if (statement === undefined) statements.set(name, (statement = build(name)));
  return statement;
}
