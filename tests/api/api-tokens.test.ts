/**
 * Personal API tokens: created once and shown once, kept only as a SHA-256 digest, used with
 * "Authorization: Bearer" and no CSRF token, held to their user's shop and role and their own
 * scope, and stopped by expiry and by revocation (by their owner or the shop owner).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { makeBenchJob, sample, uploadForm } from '../support/captures';
import { apiTokens } from '../../server/db/schema/index';
import type { RunningServer } from '../../server/main';
import type { ApiToken, ApiTokenCreated } from '../../shared/api-tokens';

let server: RunningServer;
let tech: ApiClient;
let owner: ApiClient;
let desk: ApiClient;
let other: Awaited<ReturnType<typeof makeShop>>;
let bench: Awaited<ReturnType<typeof makeBenchJob>>;
const { db, close } = testDb();

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
  owner = await signedIn(server.url, 'owner@quietpath.test');
  desk = await signedIn(server.url, 'desk@quietpath.test');
  other = await makeShop(db, 'Tokens');
  bench = await makeBenchJob(db);
});
afterAll(async () => {
  await server?.close();
  await close();
});

/** A request as a bench script makes it: the token only, no cookie, no CSRF token. */
async function withToken(token: string, method: string, path: string, body?: FormData | object) {
  const headers: Record<string, string> = { authorization: `Bearer ${token}` };
  let payload: FormData | string | undefined;
  if (body instanceof FormData) payload = body;
  else if (body) {
    headers['content-type'] = 'application/json';
    payload = JSON.stringify(body);
  }
  const res = await fetch(server.url + path, { method, headers, body: payload });
  const text = await res.text();
  return { status: res.status, body: (text ? JSON.parse(text) : null) as { error?: string } & Record<string, unknown> };
}

async function create(client: ApiClient, scope: 'upload_captures' | 'read_results', name = `bench pc ${scope}`) {
  const res = await client.post<ApiTokenCreated>('/api/account/tokens', { name, scope, expiresInDays: 30 });
  expect(res.status).toBe(201);
  return res.body;
}

const toneFile = () => ({ name: 'tone.wav', bytes: sample('tone-997hz-clean.wav'), meta: { phase: 'before' as const, stimulus: 'tone' as const, testPointId: bench.testPointIds[0]! } });

describe('API tokens', () => {
  it('shows the secret once and keeps only its SHA-256 digest (FIPS 180-4)', async () => {
    const created = await create(tech, 'read_results');
    expect(created.token).toMatch(/^qpt_[A-Za-z0-9_-]{43}$/);
    const [row] = await db.select().from(apiTokens).where(eq(apiTokens.id, created.details.id));
    expect(row!.tokenHash).toBe(createHash('sha256').update(created.token).digest('hex'));
    expect(JSON.stringify(row)).not.toContain(created.token.slice(4));
    const list = await tech.get<ApiToken[]>('/api/account/tokens');
    expect(list.status).toBe(200);
    expect(JSON.stringify(list.body)).not.toContain(created.token);
    expect(list.body.find((t) => t.id === created.details.id)).toMatchObject({ standing: 'active', scope: 'read_results', lastUsedAt: null });
  });

  it('front desk and customers cannot make tokens', async () => {
    expect((await desk.post('/api/account/tokens', { name: 'x', scope: 'read_results', expiresInDays: 5 })).status).toBe(403);
  });

  it('rejects a bad name, scope or lifetime', async () => {
    for (const body of [{ name: '', scope: 'read_results', expiresInDays: 5 }, { name: 'a', scope: 'everything', expiresInDays: 5 }, { name: 'a', scope: 'read_results', expiresInDays: 4000 }]) {
      expect((await tech.post('/api/account/tokens', body)).status).toBe(400);
    }
  });

  it('a read token reads results without a CSRF token, records its last use and may not write', async () => {
    const { token, details } = await create(tech, 'read_results');
    const job = await withToken(token, 'GET', `/api/jobs/${bench.jobId}`);
    expect(job.status).toBe(200);
    expect(job.body.id).toBe(bench.jobId);
    const [row] = await db.select().from(apiTokens).where(eq(apiTokens.id, details.id));
    expect(row!.lastUsedAt).not.toBeNull();
    const note = await withToken(token, 'POST', `/api/jobs/${bench.jobId}/notes`, { text: 'from a script' });
    expect(note.status).toBe(403);
    const upload = await withToken(token, 'POST', `/api/jobs/${bench.jobId}/captures`, uploadForm([toneFile()]));
    expect(upload.status).toBe(403);
    expect(upload.body.error).toMatch(/only read results/);
  });

  it('an upload token uploads captures without a CSRF token, and nothing else', async () => {
    const { token } = await create(tech, 'upload_captures');
    const res = await withToken(token, 'POST', `/api/jobs/${bench.jobId}/captures`, uploadForm([toneFile()]));
    expect(res.status).toBe(201);
    expect((res.body.captures as { testPointId: number }[])[0]!.testPointId).toBe(bench.testPointIds[0]);
    expect((await withToken(token, 'PUT', `/api/jobs/${bench.jobId}/fault-found`, { text: 'x' })).status).toBe(403);
  });

  it('cannot reach account, user or token routes', async () => {
    const { token } = await create(owner, 'read_results');
    for (const path of ['/api/account/tokens', '/api/users', '/api/auth/me']) {
      expect((await withToken(token, 'GET', path)).status).toBe(403);
    }
    expect((await withToken(token, 'POST', '/api/account/tokens', { name: 'more', scope: 'read_results', expiresInDays: 5 })).status).toBe(403);
  });

  it("is held to its user's shop: another shop's job is not found", async () => {
    const { token } = await create(tech, 'upload_captures');
    expect((await withToken(token, 'GET', `/api/jobs/${other.jobId}`)).status).toBe(404);
    expect((await withToken(token, 'POST', `/api/jobs/${other.jobId}/captures`, uploadForm([toneFile()]))).status).toBe(404);
    // And the other shop's token does not reach ours.
    const theirs = await signedIn(server.url, other.emails.technician, TEST_PASSWORD);
    const theirToken = (await create(theirs, 'read_results')).token;
    expect((await withToken(theirToken, 'GET', `/api/jobs/${bench.jobId}`)).status).toBe(404);
  });

  it('stops working once expired', async () => {
    const { token, details } = await create(tech, 'read_results');
    expect((await withToken(token, 'GET', '/api/jobs')).status).toBe(200);
    await db.update(apiTokens).set({ expiresAt: sql`now() - interval '1 second'` }).where(eq(apiTokens.id, details.id));
    const res = await withToken(token, 'GET', '/api/jobs');
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/expired/);
    expect((await tech.get<ApiToken[]>('/api/account/tokens')).body.find((t) => t.id === details.id)!.standing).toBe('expired');
  });

  it('is revoked by its owner; another technician cannot revoke it; the shop owner can revoke any', async () => {
    const mine = await create(tech, 'read_results');
    expect((await tech.del<ApiToken>(`/api/account/tokens/${mine.details.id}`)).body.standing).toBe('revoked');
    const res = await withToken(mine.token, 'GET', '/api/jobs');
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/revoked/);

    const ownersOwn = await create(owner, 'read_results');
    expect((await tech.del(`/api/account/tokens/${ownersOwn.details.id}`)).status).toBe(404);
    expect((await withToken(ownersOwn.token, 'GET', '/api/jobs')).status).toBe(200);

    const techs = await create(tech, 'upload_captures');
    const listed = await owner.get<ApiToken[]>('/api/account/tokens');
    expect(listed.body.some((t) => t.id === techs.details.id && t.userName.length > 0)).toBe(true);
    expect((await owner.del<ApiToken>(`/api/account/tokens/${techs.details.id}`)).status).toBe(200);
    expect((await withToken(techs.token, 'GET', '/api/jobs')).status).toBe(401);
  });

  it('another shop owner cannot see or revoke our tokens', async () => {
    const mine = await create(tech, 'read_results');
    const theirOwner = await signedIn(server.url, other.emails.owner, TEST_PASSWORD);
    expect((await theirOwner.get<ApiToken[]>('/api/account/tokens')).body.some((t) => t.id === mine.details.id)).toBe(false);
    expect((await theirOwner.del(`/api/account/tokens/${mine.details.id}`)).status).toBe(404);
  });

  it('an unknown or malformed token is refused with a clear message', async () => {
    const unknown = await withToken('qpt_not-a-real-token', 'GET', '/api/jobs');
    expect(unknown.status).toBe(401);
    expect(unknown.body.error).toMatch(/not known/);
    const res = await fetch(`${server.url}/api/jobs`, { headers: { authorization: 'Basic abc' } });
    expect(res.status).toBe(401);
  });
});
