import { randomUUID } from 'node:crypto';
import pg from 'pg';
import { z } from 'zod';
import type { SignedInCache, SignedInChange } from './signed-in-cache';

// Several server nodes each keep a signed-in cache. A sign-out, role change or switched-off
// account on one node reaches the others through PostgreSQL's LISTEN/NOTIFY within moments,
// rather than after the cache lifetime. While the listening connection is down (PostgreSQL
// restarting), nothing is trusted: the cache is emptied on the loss and again on reconnecting,
// and its lifetime (SIGNED_IN_CACHE_MS) stays the upper bound.

const CHANNEL = 'quietpath_signed_in';
const RECONNECT_MS = 1000;

const messageSchema = z.object({
  from: z.string(),
  change: z.discriminatedUnion('kind', [
    z.object({ kind: z.literal('session'), sid: z.string() }),
    z.object({ kind: z.literal('user'), userId: z.number().int() }),
    z.object({ kind: z.literal('all') }),
  ]),
});

export interface SignedInSharing {
  close(): Promise<void>;
}

export async function shareSignedInChanges(
  databaseUrl: string,
  pool: pg.Pool,
  cache: SignedInCache,
  log: (message: string) => void = (m) => console.error(m),
): Promise<SignedInSharing> {
  const node = randomUUID();
  let closed = false;
  let client: pg.Client | null = null;
  let retry: NodeJS.Timeout | undefined;

  cache.onChange((change: SignedInChange) => {
    const payload = JSON.stringify({ from: node, change });
    pool.query('select pg_notify($1, $2)', [CHANNEL, payload]).catch((err: unknown) => {
      log(`signed-in sharing: could not tell the other nodes: ${err instanceof Error ? err.message : String(err)}`);
    });
  });

  const lost = (c: pg.Client) => {
    if (client !== c) return;
    client = null;
    cache.apply({ kind: 'all' });
    if (!closed) retry = setTimeout(() => void listen(), RECONNECT_MS);
  };

  async function listen(): Promise<void> {
    const c = new pg.Client({ connectionString: databaseUrl, application_name: 'quietpath-signed-in' });
    c.on('error', () => lost(c));
    c.on('end', () => lost(c));
    c.on('notification', (n) => {
      if (n.channel !== CHANNEL || !n.payload) return;
      let parsed: z.infer<typeof messageSchema>;
      try {
        parsed = messageSchema.parse(JSON.parse(n.payload));
      } catch {
        cache.apply({ kind: 'all' }); // unreadable: forget everything rather than guess
        return;
      }
      if (parsed.from !== node) cache.apply(parsed.change);
    });
    client = c;
    try {
      await c.connect();
      await c.query(`listen ${CHANNEL}`);
      cache.apply({ kind: 'all' }); // changes made while this connection was down were missed
    } catch {
      await c.end().catch(() => undefined);
      lost(c);
    }
  }

  await listen();
  return {
    async close() {
      closed = true;
      clearTimeout(retry);
      const c = client;
      client = null;
      await c?.end().catch(() => undefined);
    },
  };
}
