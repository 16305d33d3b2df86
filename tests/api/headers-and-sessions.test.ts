import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { signedIn } from '../support/client';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
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
});

describe('sessions', () => {
  it('a session past its expiry is refused', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    expect((await c.get('/api/auth/me')).status).toBe(200);
    const me = await c.get<{ user: { id: number } }>('/api/auth/me');
    await db.execute(sql`update "session" set expire = now() - interval '1 minute' where (sess->>'userId')::int = ${me.body.user.id}`);
    expect((await c.get('/api/auth/me')).status).toBe(401);
  });

  it('a switched-off account loses its open session at once', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const email = `switch-off-${Date.now()}@quietpath.test`;
    const made = await owner.post<{ id: number }>('/api/users', { email, name: 'Temp Hand', role: 'technician', password: 'temporary-bench-pass' });
    expect(made.status).toBe(201);
    const temp = await signedIn(server.url, email, 'temporary-bench-pass');
    // Switch the account off behind the server's back: the next request must not see it signed in.
    await db.execute(sql`update users set active = false where id = ${made.body.id}`);
    expect((await temp.get('/api/jobs')).status).toBe(401);
  });
});
