import { Router } from 'express';
import { sql } from 'drizzle-orm';
import type { Db } from '../db/client';

export function healthRoutes(db: Db): Router {
  const r = Router();
  r.get('/', async (_req, res) => {
    try {
      await db.execute(sql`select 1`);
      res.json({ ok: true, database: 'up' });
    } catch {
      res.status(503).json({ ok: false, database: 'down', error: 'The database is not reachable' });
    }
  });
  return r;
}
