import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { signedIn } from '../support/client';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
/** The server's signed-in cache lifetime (the default of SIGNED_IN_CACHE_MS). */
const CACHE_MS = 1000;

/** Polls until the client is refused (401), for at most `ms`. */
async function refusedWithin(client: Awaited<ReturnType<typeof signedIn>>, ms: number): Promise<boolean> {
  const until = Date.now() + ms;
  for (;;) {
    if ((await client.get('/api/auth/me')).status === 401) return true;
    if (Date.now() > until) return false;
    await new Promise((r) => setTimeout(r, 50));
  }
}
const { db, close } = testDb();
beforeAll(async () => {
  server = await startTestServer();
});
afterAll(async () => {
  await server.close();
  await close();
});

describe('security headers (helmet)', () => {
  it('sends a content security policy and the usual hardening headers', async () => {
    const res = await fetch(`${server.url}/api/health`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-security-policy')).toMatch(/default-src 'self'/);
    expect(res.headers.get('content-security-policy')).toMatch(/frame-ancestors 'self'/);
    expect(res.headers.get('x-content-type-options')).toBe('nosniff');
    expect(res.headers.get('referrer-policy')).toBe('no-referrer');
    expect(res.headers.get('x-powered-by')).toBeNull();
  });

  it('API answers are not stored by browsers or proxies (signed-in data)', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    const res = await c.get('/api/jobs');
    expect(res.status).toBe(200);
    expect(res.headers.get('cache-control')).toBe('private, no-store');
    expect(res.headers.get('etag')).toBeNull();
  });
});

describe('sessions', () => {
  it('a session past its expiry is refused', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    expect((await c.get('/api/auth/me')).status).toBe(200);
    const me = await c.get<{ user: { id: number } }>('/api/auth/me');
    await db.execute(sql`update "session" set expire = now() - interval '1 minute' where (sess->>'userId')::int = ${me.body.user.id}`);
    // Changed in the database behind the server's back: seen once the signed-in cache lets go.
    expect(await refusedWithin(c, CACHE_MS + 500)).toBe(true);
  });

  async function tempHand(owner: Awaited<ReturnType<typeof signedIn>>) {
    const email = `switch-off-${Date.now()}-${Math.random().toString(36).slice(2, 8)}@quietpath.test`;
    const made = await owner.post<{ id: number }>('/api/users', { email, name: 'Temp Hand', role: 'technician', password: 'temporary-bench-pass' });
    expect(made.status).toBe(201);
    const client = await signedIn(server.url, email, 'temporary-bench-pass');
    expect((await client.get('/api/jobs')).status).toBe(200);
    return { id: made.body.id, client };
  }

  it('an account switched off by the owner loses its open session at once', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const temp = await tempHand(owner);
    // The session was just used, so it sits in the signed-in cache: the switch-off must clear it.
    expect((await owner.patch(`/api/users/${temp.id}`, { active: false })).status).toBe(200);
    expect((await temp.client.get('/api/jobs')).status).toBe(401);
  });

  it('a role change by the owner takes effect on the very next request', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const temp = await tempHand(owner);
    expect((await owner.patch(`/api/users/${temp.id}`, { role: 'front_desk' })).status).toBe(200);
    // Role changes end the user's sessions (they sign in again under the new role).
    expect((await temp.client.get('/api/jobs')).status).toBe(401);
  });

  it('an account switched off in the database behind the server’s back is refused within the cache lifetime', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const temp = await tempHand(owner);
    await db.execute(sql`update users set active = false where id = ${temp.id}`);
    expect(await refusedWithin(temp.client, CACHE_MS + 500)).toBe(true);
  });
});
