import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { DEMO_USERS } from '../../server/db/seed';
import { THROTTLE } from '../../server/services/auth';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
beforeAll(async () => {
  server = await startTestServer();
});
afterAll(() => server.close());

describe('sign-in', () => {
  it.each(DEMO_USERS.map((u) => [u.email, u.role] as const))('%s signs in as %s', async (email, role) => {
    const c = new ApiClient(server.url);
    const res = await c.login(email);
    expect(res.status).toBe(200);
    const me = await c.get<{ user: { role: string; email: string; shop: { name: string } } }>('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body.user.role).toBe(role);
    expect(me.body.user.email).toBe(email);
    expect(me.body.user.shop.name).toBe('Copperleaf Audio Workshop');
  });

  it('refuses a wrong password with 401 and no session', async () => {
    const c = new ApiClient(server.url);
    const res = await c.login('desk@quietpath.test', 'not-the-password');
    expect(res.status).toBe(401);
    expect((res.body as { error: string }).error).toMatch(/not right/);
    expect((await c.get('/api/auth/me')).status).toBe(401);
  });

  it('answers a malformed sign-in with 400 and the field at fault', async () => {
    const c = new ApiClient(server.url);
    const res = await c.post<{ error: string; details: { path: string }[] }>('/api/auth/login', { email: 'nope', password: '' });
    expect(res.status).toBe(400);
    expect(res.body.details.map((d) => d.path)).toContain('email');
  });

  it('gives a new session id at sign-in', async () => {
    const c = new ApiClient(server.url);
    await c.refreshCsrf();
    const before = (c as unknown as { cookies: Map<string, string> }).cookies.get('qp.sid');
    expect(before).toBeTruthy();
    await c.login('tech@quietpath.test');
    const after = (c as unknown as { cookies: Map<string, string> }).cookies.get('qp.sid');
    expect(after).toBeTruthy();
    expect(after).not.toBe(before);
  });

  it('sets an httpOnly, SameSite session cookie', async () => {
    const c = new ApiClient(server.url);
    await c.refreshCsrf();
    const res = await c.raw('POST', '/api/auth/login', { email: 'tech@quietpath.test', password: 'bench-demo-2026' });
    const cookie = res.headers.getSetCookie().find((l) => l.startsWith('qp.sid='));
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
  });

  it('signs out: the old session no longer works', async () => {
    const c = await signedIn(server.url, 'owner@quietpath.test');
    expect((await c.get('/api/jobs')).status).toBe(200);
    expect((await c.post('/api/auth/logout')).status).toBe(204);
    expect((await c.get('/api/jobs')).status).toBe(401);
  });

  it(`throttles after ${THROTTLE.perEmail} wrong passwords for one account, even with the right one`, async () => {
    const { db, close } = testDb();
    const { makeShop, TEST_PASSWORD } = await import('../support/factories');
    const other = await makeShop(db, 'Throttle');
    await close();
    const email = other.emails.front_desk;
    const c = new ApiClient(server.url);
    for (let i = 0; i < THROTTLE.perEmail; i++) expect((await c.login(email, 'wrong-guess')).status).toBe(401);
    const res = await c.login(email, TEST_PASSWORD);
    expect(res.status).toBe(429);
  });
});

describe('CSRF', () => {
  it('refuses a state-changing request without the token', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    const res = await c.call('POST', '/api/customers', { name: 'No Token' }, { csrf: false });
    expect(res.status).toBe(403);
    expect((res.body as { code: string }).code).toBe('csrf');
  });

  it('refuses a token from another session', async () => {
    const a = await signedIn(server.url, 'desk@quietpath.test');
    const b = await signedIn(server.url, 'owner@quietpath.test');
    b.csrfToken = a.csrfToken;
    const res = await b.post('/api/customers', { name: 'Borrowed Token' });
    expect(res.status).toBe(403);
  });

  it('accepts the same request with the session token', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    const res = await c.post<{ name: string }>('/api/customers', { name: 'With Token' });
    expect(res.status).toBe(201);
    expect(res.body.name).toBe('With Token');
  });
});

describe('health', () => {
  it('reports the database up', async () => {
    const res = await new ApiClient(server.url).get<{ ok: boolean; database: string }>('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true, database: 'up' });
  });
  it('answers an unknown API path with a JSON 404', async () => {
    const res = await new ApiClient(server.url).get<{ error: string }>('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body.error).toMatch(/No such API route/);
  });
});
