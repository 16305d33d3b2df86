import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { bookJob, demoClients } from '../support/bench';
import { testPoints } from '../../server/db/schema/index';
import { SIGNAL_PATH_TEMPLATES } from '../../shared/test-points';
import type { TestPoint } from '../../shared/test-points';
import type { RunningServer } from '../../server/main';
import type { Role } from '../../shared/roles';

let server: RunningServer;
let c: Record<Role, ApiClient> & { techId: number };
let otherOwner: ApiClient;
let otherTestPointId: number;
let otherJobId: number;

beforeAll(async () => {
  server = await startTestServer();
  c = await demoClients(server.url);
  const { db, close } = testDb();
  const other = await makeShop(db, 'Points');
  otherJobId = other.jobId;
  const [tp] = await db.insert(testPoints).values({ shopId: other.shopId, jobId: other.jobId, position: 1, name: 'Their socket' }).returning();
  otherTestPointId = tp!.id;
  await close();
  otherOwner = new ApiClient(server.url);
  await otherOwner.login(other.emails.owner, TEST_PASSWORD);
});
afterAll(() => server.close());

const list = (who: ApiClient, jobId: number) => who.get<TestPoint[]>(`/api/jobs/${jobId}/test-points`);

describe('template at intake', () => {
  it.each(Object.keys(SIGNAL_PATH_TEMPLATES) as (keyof typeof SIGNAL_PATH_TEMPLATES)[])('a new %s job gets its signal path', async (kind) => {
    const job = await bookJob(c.front_desk, { kind });
    const res = await list(c.technician, job.id);
    expect(res.status).toBe(200);
    expect(res.body.map((t) => t.name)).toEqual(SIGNAL_PATH_TEMPLATES[kind].map((t) => t.name));
    expect(res.body.map((t) => t.position)).toEqual(res.body.map((_, i) => i + 1));
  });

  it('an integrated amplifier runs from the input socket to the speaker terminals', async () => {
    const job = await bookJob(c.front_desk, { kind: 'integrated_amplifier' });
    const res = await list(c.front_desk, job.id);
    expect(res.status).toBe(200);
    expect(res.body[0]!.name).toBe('Input socket');
    expect(res.body.at(-1)!.name).toBe('Speaker terminals');
  });
});

describe('editing the signal path', () => {
  it('add, rename, delete (closing the gap) and reorder', async () => {
    const job = await bookJob(c.front_desk, { kind: 'phono_stage' });
    const added = await c.technician.post<TestPoint>(`/api/jobs/${job.id}/test-points`, { name: 'Subsonic filter output', description: 'After C14' });
    expect(added.status).toBe(201);
    expect(added.body).toMatchObject({ jobId: job.id, position: 5, name: 'Subsonic filter output', description: 'After C14' });

    const renamed = await c.owner.patch<TestPoint>(`/api/test-points/${added.body.id}`, { name: 'Rumble filter output' });
    expect(renamed.status).toBe(200);
    expect(renamed.body).toMatchObject({ name: 'Rumble filter output', description: 'After C14' });

    const before = (await list(c.technician, job.id)).body;
    const second = before[1]!;
    expect((await c.technician.del(`/api/test-points/${second.id}`)).status).toBe(204);
    const afterDelete = (await list(c.technician, job.id)).body;
    expect(afterDelete.map((t) => t.id)).toEqual(before.filter((t) => t.id !== second.id).map((t) => t.id));
    expect(afterDelete.map((t) => t.position)).toEqual([1, 2, 3, 4]);

    const reversed = afterDelete.map((t) => t.id).reverse();
    const reordered = await c.technician.put<TestPoint[]>(`/api/jobs/${job.id}/test-points/order`, { ids: reversed });
    expect(reordered.status).toBe(200);
    expect(reordered.body.map((t) => t.id)).toEqual(reversed);
    expect((await list(c.owner, job.id)).body.map((t) => [t.id, t.position])).toEqual(reversed.map((id, i) => [id, i + 1]));
  });

  it('an order that leaves one out, adds a stranger or repeats one is refused and changes nothing', async () => {
    const job = await bookJob(c.front_desk, { kind: 'other' });
    const ids = (await list(c.technician, job.id)).body.map((t) => t.id);
    const missing = await c.technician.put(`/api/jobs/${job.id}/test-points/order`, { ids: ids.slice(1) });
    expect(missing.status).toBe(409);
    const stranger = await c.technician.put(`/api/jobs/${job.id}/test-points/order`, { ids: [ids[0], otherTestPointId] });
    expect(stranger.status).toBe(409);
    const twice = await c.technician.put(`/api/jobs/${job.id}/test-points/order`, { ids: [ids[0], ids[0]] });
    expect(twice.status).toBe(400);
    expect((await list(c.technician, job.id)).body.map((t) => t.id)).toEqual(ids);
  });

  it('bad input is 400', async () => {
    const job = await bookJob(c.front_desk);
    const tp = (await list(c.technician, job.id)).body[0]!;
    expect((await c.technician.post(`/api/jobs/${job.id}/test-points`, { name: '' })).status).toBe(400);
    expect((await c.technician.post(`/api/jobs/${job.id}/test-points`, { name: 'x'.repeat(121) })).status).toBe(400);
    expect((await c.technician.patch(`/api/test-points/${tp.id}`, {})).status).toBe(400);
    expect((await c.technician.patch(`/api/test-points/${tp.id}`, { position: 3 })).status).toBe(400);
    expect((await c.technician.put(`/api/jobs/${job.id}/test-points/order`, { ids: 'all' })).status).toBe(400);
  });
});

describe('who may', () => {
  it('the desk reads but does not edit; a customer does neither', async () => {
    const job = await bookJob(c.front_desk);
    const tp = (await list(c.front_desk, job.id)).body[0]!;
    expect((await c.front_desk.post(`/api/jobs/${job.id}/test-points`, { name: 'x' })).status).toBe(403);
    expect((await c.front_desk.patch(`/api/test-points/${tp.id}`, { name: 'x' })).status).toBe(403);
    expect((await c.front_desk.del(`/api/test-points/${tp.id}`)).status).toBe(403);
    expect((await c.front_desk.put(`/api/jobs/${job.id}/test-points/order`, { ids: [tp.id] })).status).toBe(403);
    expect((await list(c.customer, job.id)).status).toBe(403);
  });

  it("another shop's test points and job are 404 and stay untouched", async () => {
    expect((await list(c.owner, otherJobId)).status).toBe(404);
    expect((await c.owner.post(`/api/jobs/${otherJobId}/test-points`, { name: 'Mine now' })).status).toBe(404);
    expect((await c.owner.patch(`/api/test-points/${otherTestPointId}`, { name: 'Renamed' })).status).toBe(404);
    expect((await c.technician.del(`/api/test-points/${otherTestPointId}`)).status).toBe(404);
    expect((await c.owner.put(`/api/jobs/${otherJobId}/test-points/order`, { ids: [otherTestPointId] })).status).toBe(404);
    const { db, close } = testDb();
    const [row] = await db.select().from(testPoints).where(eq(testPoints.id, otherTestPointId));
    await close();
    expect(row?.name).toBe('Their socket');
    const theirs = await list(otherOwner, otherJobId);
    expect(theirs.status).toBe(200);
    expect(theirs.body.map((t) => t.name)).toEqual(['Their socket']);
  });
});
