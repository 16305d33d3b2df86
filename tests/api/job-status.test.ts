import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { asc, eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { bookJob, demoClients } from '../support/bench';
import { jobEvents, jobs } from '../../server/db/schema/index';
import type { RunningServer } from '../../server/main';
import type { JobDetail, JobStatus } from '../../shared/jobs';
import type { Role } from '../../shared/roles';
import type { ApiClient } from '../support/client';

let server: RunningServer;
let c: Record<Role, ApiClient> & { techId: number };

beforeAll(async () => {
  server = await startTestServer();
  c = await demoClients(server.url);
});
afterAll(() => server.close());

async function trail(jobId: number) {
  const { db, close } = testDb();
  const rows = await db.select().from(jobEvents).where(eq(jobEvents.jobId, jobId)).orderBy(asc(jobEvents.id));
  const [job] = await db.select().from(jobs).where(eq(jobs.id, jobId));
  await close();
  return { rows, status: job!.status };
}

const move = (who: ApiClient, jobId: number, to: JobStatus, extra: Record<string, unknown> = {}) =>
  who.post<JobDetail & { error: string }>(`/api/jobs/${jobId}/status`, { to, ...extra });

describe('stage moves', () => {
  it('walks the whole way, each role at its own stages, one trail row per move', async () => {
    const job = await bookJob(c.front_desk);
    const steps: [Role, JobStatus][] = [
      ['technician', 'diagnosis'],
      ['front_desk', 'awaiting_approval'],
      ['technician', 'awaiting_parts'],
      ['technician', 'repair'],
      ['technician', 'soak_test'],
      ['technician', 'ready'],
      ['front_desk', 'collected'],
    ];
    let from: JobStatus = 'booked_in';
    for (const [role, to] of steps) {
      const res = await move(c[role], job.id, to, { from, note: `to ${to}` });
      expect(res.status, `${role} → ${to}`).toBe(200);
      expect(res.body.status).toBe(to);
      from = to;
    }
    const { rows, status } = await trail(job.id);
    expect(status).toBe('collected');
    expect(rows.map((r) => [r.kind, r.fromStatus, r.toStatus, r.note])).toEqual([
      ['status', null, 'booked_in', 'Booked in'],
      ...steps.map(([, to], i) => ['status', i === 0 ? 'booked_in' : steps[i - 1]![1], to, `to ${to}`]),
    ]);
    const techId = c.techId;
    expect(rows.filter((r) => r.userId === techId).length).toBe(5);
  });

  it('allows a sensible move back: repair → diagnosis', async () => {
    const job = await bookJob(c.front_desk);
    for (const to of ['diagnosis', 'repair'] as const) expect((await move(c.technician, job.id, to)).status).toBe(200);
    const back = await move(c.technician, job.id, 'diagnosis', { note: 'Second fault on the driver board' });
    expect(back.status).toBe(200);
    expect(back.body.events.at(-1)).toMatchObject({ fromStatus: 'repair', toStatus: 'diagnosis', note: 'Second fault on the driver board' });
  });

  it('refuses nonsense with 409 and a message, and writes nothing', async () => {
    const job = await bookJob(c.front_desk);
    const before = await trail(job.id);
    const skip = await move(c.technician, job.id, 'repair');
    expect(skip.status).toBe(409);
    expect(skip.body.error).toBe('A job cannot go from “Booked in” to “Repair”');
    const same = await move(c.front_desk, job.id, 'booked_in');
    expect(same.status).toBe(409);
    expect(same.body.error).toMatch(/already at “Booked in”/);
    const after = await trail(job.id);
    expect(after.status).toBe('booked_in');
    expect(after.rows.length).toBe(before.rows.length);
  });

  it('collected is the end of the road', async () => {
    const job = await bookJob(c.front_desk);
    for (const to of ['diagnosis', 'ready'] as const) expect((await move(c.technician, job.id, to)).status).toBe(200);
    expect((await move(c.front_desk, job.id, 'collected')).status).toBe(200);
    const res = await move(c.owner, job.id, 'diagnosis');
    expect(res.status).toBe(409);
  });

  it('refuses a role outside its stages with 403', async () => {
    const job = await bookJob(c.front_desk);
    const desk = await move(c.front_desk, job.id, 'diagnosis');
    expect(desk.status).toBe(403);
    expect(desk.body.error).toBe('Front desk cannot move a job to “Diagnosis”');
    expect((await move(c.customer, job.id, 'diagnosis')).status).toBe(403);
    for (const to of ['diagnosis', 'ready'] as const) expect((await move(c.technician, job.id, to)).status).toBe(200);
    const tech = await move(c.technician, job.id, 'collected');
    expect(tech.status).toBe(403);
    expect((await trail(job.id)).status).toBe('ready');
  });

  it('the owner may make every move', async () => {
    const job = await bookJob(c.front_desk);
    for (const to of ['diagnosis', 'awaiting_approval', 'repair', 'soak_test', 'ready', 'collected'] as const) {
      expect((await move(c.owner, job.id, to)).status, to).toBe(200);
    }
  });

  it('a stale "from" is refused: two people moving at once, one wins', async () => {
    const job = await bookJob(c.front_desk);
    const [a, b] = await Promise.all([
      move(c.technician, job.id, 'diagnosis', { from: 'booked_in' }),
      move(c.owner, job.id, 'diagnosis', { from: 'booked_in' }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
    const { rows } = await trail(job.id);
    expect(rows.filter((r) => r.toStatus === 'diagnosis').length).toBe(1);
  });

  it('bad input is 400', async () => {
    const job = await bookJob(c.front_desk);
    expect((await move(c.technician, job.id, 'fixed' as JobStatus)).status).toBe(400);
    expect((await c.technician.post(`/api/jobs/${job.id}/status`, {})).status).toBe(400);
  });
});
