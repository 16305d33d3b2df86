/**
 * The access table: every API route the app registers (read from the app, not listed by hand),
 * called as anonymous, as each role, with another shop's and another customer's ids.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { sample, upload } from '../support/captures';
import { listRoutes, type RouteInfo } from '../../server/route-catalog';
import { ROLES, type Role } from '../../shared/roles';
import type { RunningServer } from '../../server/main';
import { API_TOKEN_SCOPES, type ApiTokenCreated, type ApiTokenScope } from '../../shared/api-tokens';

const DEMO_EMAIL: Record<Role, string> = {
  owner: 'owner@quietpath.test',
  technician: 'tech@quietpath.test',
  front_desk: 'desk@quietpath.test',
  customer: 'customer@quietpath.test',
};
/** No row has this id, so an allowed call can only answer 404. */
const MISSING_ID = 2_000_000_000;

let server: RunningServer;
let routes: RouteInfo[];
let other: Awaited<ReturnType<typeof makeShop>>;
let otherUserId: number;
/** A capture the other shop really stored, so a route that crossed shops would find its file. */
let otherCaptureId: number;
const clients = {} as Record<Role | 'anonymous', ApiClient>;
/** The technician's API tokens, one per scope, and one that has been revoked. */
const tokenClients = {} as Record<ApiTokenScope | 'revoked', ApiClient>;

beforeAll(async () => {
  server = await startTestServer();
  routes = listRoutes(server.app).filter((r) => r.roles !== null);
  const { db, close } = testDb();
  other = await makeShop(db, 'Access');
  await close();
  clients.anonymous = new ApiClient(server.url);
  for (const role of ROLES) clients[role] = await signedIn(server.url, DEMO_EMAIL[role]);
  const theirs = new ApiClient(server.url);
  await theirs.login(other.emails.owner, TEST_PASSWORD);
  otherUserId = (await theirs.get<{ id: number }[]>('/api/users')).body[0]!.id;
  const stored = await upload(theirs, other.jobId, [
    { name: 'theirs.wav', bytes: sample('tone-997hz-clean.wav'), meta: { phase: 'before', stimulus: 'tone' } },
  ]);
  if (stored.status !== 201) throw new Error(`the other shop's upload answered ${stored.status}`);
  otherCaptureId = stored.body.captures[0]!.id;
  const makeToken = async (scope: ApiTokenScope) =>
    (await clients.technician.post<ApiTokenCreated>('/api/account/tokens', { name: `access ${scope}`, scope, expiresInDays: 1 })).body;
  for (const scope of API_TOKEN_SCOPES) tokenClients[scope] = new ApiClient(server.url, (await makeToken(scope)).token);
  const revoked = await makeToken('read_results');
  await clients.technician.del(`/api/account/tokens/${revoked.details.id}`);
  tokenClients.revoked = new ApiClient(server.url, revoked.token);
});
afterAll(() => server.close());

/** Ids owned by another shop (staff) or by another customer of our shop (customer role). */
function idFor(segment: string, role: Role): number {
  if (role === 'customer') {
    const otherCustomer: Record<string, number> = { jobs: 2, units: 2, customers: 2 };
    return otherCustomer[segment] ?? MISSING_ID;
  }
  const otherShop: Record<string, number> = {
    customers: other.customerId,
    units: other.unitId,
    jobs: other.jobId,
    users: otherUserId,
    captures: otherCaptureId,
  };
  return otherShop[segment] ?? MISSING_ID;
}

function concretePath(path: string, role: Role): string {
  const parts = path.split('/');
  return parts.map((p, i) => (p.startsWith(':') ? String(idFor(parts[i - 1] ?? '', role)) : p)).join('/');
}

const hasParams = (r: RouteInfo) => r.path.includes('/:');
const send = (c: ApiClient, method: string, path: string) => c.call(method, path, method === 'GET' || method === 'DELETE' ? undefined : {});

describe('access table', () => {
  it('finds the routes to check', () => {
    expect(routes.length).toBeGreaterThan(15);
  });

  it('anonymous: every gated route answers 401', async () => {
    const rows = [];
    for (const r of routes) rows.push({ route: `${r.method} ${r.path}`, status: (await send(clients.anonymous, r.method, concretePath(r.path, 'owner'))).status });
    expect(rows.filter((x) => x.status !== 401)).toEqual([]);
  });

  for (const role of ROLES) {
    it(`${role}: refused routes answer 403`, async () => {
      const rows = [];
      for (const r of routes.filter((x) => !x.roles!.includes(role))) {
        rows.push({ route: `${r.method} ${r.path}`, status: (await send(clients[role], r.method, concretePath(r.path, role))).status });
      }
      expect(rows.filter((x) => x.status !== 403)).toEqual([]);
    });

    it(`${role}: allowed routes never reach ${role === 'customer' ? "another customer's" : "another shop's"} rows`, async () => {
      const rows = [];
      for (const r of routes.filter((x) => x.roles!.includes(role) && hasParams(x))) {
        const status = (await send(clients[role], r.method, concretePath(r.path, role))).status;
        // A read must be 404; a write may be refused for its (empty) body first, but never succeed.
        const ok = r.method === 'GET' ? status === 404 : [400, 404, 415].includes(status);
        rows.push({ route: `${r.method} ${r.path}`, status, ok });
      }
      expect(rows.filter((x) => !x.ok)).toEqual([]);
    });

    it(`${role}: allowed routes without ids are let through`, async () => {
      const rows = [];
      for (const r of routes.filter((x) => x.roles!.includes(role) && !hasParams(x))) {
        const status = (await send(clients[role], r.method, r.path)).status;
        rows.push({ route: `${r.method} ${r.path}`, status, ok: status !== 401 && status !== 403 && status < 500 });
      }
      expect(rows.filter((x) => !x.ok)).toEqual([]);
    });
  }
});

/** Routes a token may never use: people's sign-in, account and user management. */
const PEOPLE_ONLY = /^\/api\/(auth|account|users|audit)(\/|$)/;
const isUpload = (r: RouteInfo) => r.method === 'POST' && r.path === '/api/jobs/:id/captures';

describe('access table with API tokens (a technician\'s)', () => {
  it('a revoked token: every gated route answers 401', async () => {
    const rows = [];
    for (const r of routes) rows.push({ route: `${r.method} ${r.path}`, status: (await send(tokenClients.revoked, r.method, concretePath(r.path, 'technician'))).status });
    expect(rows.filter((x) => x.status !== 401)).toEqual([]);
  });

  for (const scope of API_TOKEN_SCOPES) {
    it(`${scope}: writes outside the scope, people routes and routes the role refuses answer 403`, async () => {
      const rows = [];
      for (const r of routes) {
        const inScope = r.method === 'GET' || (scope === 'upload_captures' && isUpload(r));
        if (inScope && !PEOPLE_ONLY.test(r.path) && r.roles!.includes('technician')) continue;
        rows.push({ route: `${r.method} ${r.path}`, status: (await send(tokenClients[scope], r.method, concretePath(r.path, 'technician'))).status });
      }
      expect(rows.length).toBeGreaterThan(10);
      expect(rows.filter((x) => x.status !== 403)).toEqual([]);
    });

    it(`${scope}: allowed routes never reach another shop's rows`, async () => {
      const rows = [];
      for (const r of routes.filter((x) => x.roles!.includes('technician') && hasParams(x) && !PEOPLE_ONLY.test(x.path))) {
        if (!(r.method === 'GET' || (scope === 'upload_captures' && isUpload(r)))) continue;
        const status = (await send(tokenClients[scope], r.method, concretePath(r.path, 'technician'))).status;
        rows.push({ route: `${r.method} ${r.path}`, status, ok: r.method === 'GET' ? status === 404 : [400, 404, 415].includes(status) });
      }
      expect(rows.length).toBeGreaterThan(5);
      expect(rows.filter((x) => !x.ok)).toEqual([]);
    });
  }
});
