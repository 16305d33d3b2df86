import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop } from '../support/factories';
import { passwordProblem } from '../../shared/users';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let other: Awaited<ReturnType<typeof makeShop>>;
beforeAll(async () => {
  server = await startTestServer();
  const { db, close } = testDb();
  other = await makeShop(db, 'People');
  await close();
});
afterAll(() => server.close());

const strong = 'solder-flux-and-patience';
const uniqueEmail = () => `person-${randomUUID().slice(0, 8)}@quietpath.test`;

describe('password rules (NIST SP 800-63B: length, no known passwords)', () => {
  it.each([
    ['short1', /at least 12/],
    ['password1234'.slice(0, 11), /at least 12/],
    ['bias-set-at-warm-idle', null],
    ['aaaaaaaaaaaaaaa', /different characters/],
    ['password123', /at least 12/],
  ])('%s', (pw, expected) => {
    const problem = passwordProblem(pw);
    if (expected) expect(problem).toMatch(expected);
    else expect(problem).toBeNull();
  });
  it('refuses a password built from the e-mail name', () => {
    expect(passwordProblem('marguerite-2026!', 'marguerite@example.test')).toMatch(/e-mail/);
  });
});

describe('people (owner only)', () => {
  it.each([['tech@quietpath.test'], ['desk@quietpath.test'], ['customer@quietpath.test']])('%s gets 403', async (email) => {
    const c = await signedIn(server.url, email);
    expect((await c.get('/api/users')).status).toBe(403);
    expect((await c.post('/api/users', { email: uniqueEmail(), name: 'X', role: 'owner', password: strong })).status).toBe(403);
  });

  it('the owner adds a technician who can then sign in', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const email = uniqueEmail();
    const res = await owner.post<{ id: number; role: string }>('/api/users', { email, name: 'New Bench Hand', role: 'technician', password: strong });
    expect(res.status).toBe(201);
    expect(res.body.role).toBe('technician');
    const c = new ApiClient(server.url);
    expect((await c.login(email, strong)).status).toBe(200);
  });

  it('a weak first password is refused with the rule', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const res = await owner.post<{ details: { path: string; message: string }[] }>('/api/users', { email: uniqueEmail(), name: 'Weak', role: 'technician', password: 'short' });
    expect(res.status).toBe(400);
    expect(res.body.details[0]).toMatchObject({ path: 'password' });
  });

  it('a duplicate e-mail is 409', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const res = await owner.post('/api/users', { email: 'tech@quietpath.test', name: 'Dup', role: 'technician', password: strong });
    expect(res.status).toBe(409);
  });

  it('a role change is audited and ends that user\'s sessions', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const email = uniqueEmail();
    const created = await owner.post<{ id: number }>('/api/users', { email, name: 'Role Changer', role: 'technician', password: strong });
    const person = new ApiClient(server.url);
    await person.login(email, strong);
    expect((await person.get('/api/jobs')).status).toBe(200);
    const res = await owner.patch<{ role: string }>(`/api/users/${created.body.id}`, { role: 'front_desk' });
    expect(res.status).toBe(200);
    expect(res.body.role).toBe('front_desk');
    expect((await person.get('/api/jobs')).status).toBe(401);
    const audit = await owner.get<{ action: string; detail: Record<string, unknown> }[]>('/api/audit/events');
    expect(audit.body.find((a) => a.action === 'user.role_changed' && a.detail.userId === created.body.id)?.detail).toMatchObject({ from: 'technician', to: 'front_desk' });
  });

  it('the last active owner cannot be demoted', async () => {
    const c = new ApiClient(server.url);
    expect((await c.login(other.emails.owner, 'another-shop-pass-77')).status).toBe(200);
    const people = await c.get<{ id: number; email: string }[]>('/api/users');
    const me = people.body.find((p) => p.email === other.emails.owner)!;
    const res = await c.patch(`/api/users/${me.id}`, { role: 'technician' });
    expect(res.status).toBe(409);
  });

  it("another shop's user is 404 to our owner", async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const theirs = new ApiClient(server.url);
    await theirs.login(other.emails.owner, 'another-shop-pass-77');
    const list = await theirs.get<{ id: number }[]>('/api/users');
    const res = await owner.patch(`/api/users/${list.body[0]!.id}`, { active: false });
    expect(res.status).toBe(404);
  });

  it('sign-ins are listed for the owner, failures included', async () => {
    const bad = new ApiClient(server.url);
    await bad.login('desk@quietpath.test', 'not-it-at-all');
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const res = await owner.get<{ email: string; succeeded: boolean }[]>('/api/audit/sign-ins');
    expect(res.status).toBe(200);
    expect(res.body.some((r) => r.email === 'desk@quietpath.test' && !r.succeeded)).toBe(true);
  });
});

describe('own password', () => {
  it('changes with the current password and refuses a wrong one', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const email = uniqueEmail();
    await owner.post('/api/users', { email, name: 'Pw Changer', role: 'front_desk', password: strong });
    const me = new ApiClient(server.url);
    await me.login(email, strong);
    expect((await me.post('/api/account/password', { currentPassword: 'wrong', newPassword: 'another-long-one-99' })).status).toBe(400);
    expect((await me.post('/api/account/password', { currentPassword: strong, newPassword: 'another-long-one-99' })).status).toBe(204);
    expect((await me.get('/api/auth/me')).status).toBe(200);
    expect((await new ApiClient(server.url).login(email, 'another-long-one-99')).status).toBe(200);
  });
});
