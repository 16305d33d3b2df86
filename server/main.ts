import type { Server } from 'node:http';
import type { Express } from 'express';
import { loadConfig, type Config } from './config';
import { createDb } from './db/client';
import { runMigrations } from './db/migrate';
import { createApp } from './app';

export interface RunningServer {
  url: string;
  app: Express;
  close(): Promise<void>;
}

/** Migrates, then serves the API (and the built web app, when configured). */
export async function startServer(env: Record<string, string | undefined> = process.env): Promise<RunningServer> {
  const config: Config = loadConfig(env);
  const { pool, db } = createDb(config.DATABASE_URL);
  await runMigrations(db);
  const app = createApp({ config, db, pool });
  const server: Server = await new Promise((resolve) => {
    const s = app.listen(config.PORT, config.HOST, () => resolve(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.PORT;
  return {
    url: `http://${config.HOST}:${port}`,
    app,
    close: async () => {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeAllConnections();
      await pool.end();
    },
  };
}
