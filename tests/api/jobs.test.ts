import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { bookJob, demoClients } from '../support/bench';
import { jobs } from '../../server/db/schema/index';
import type { RunningServer } from '../../server/main';
import { JOB_SORTS, type JobDetail, type JobSummary } from '../../shared/jobs';
import { listStatementName } from '../../server/services/jobs';
import type { Role } from '../../shared/roles';
import type { ApiClient as Client } from '../support/client';

let server: RunningServer;
let c: Record<Role, Client> & { techId: number };
let other: Awaited<ReturnType<typeof makeShop>>;
let otherTech: ApiClient;
const database = () => testDb();

beforeAll(async () => {
  server = await startTestServer();
  c = await demoClients(server.url);
  const { db, close } = database();
  other = await makeShop(db, 'Jobs');
  await close();
  otherTech = new ApiClient(server.url);
  await otherTech.login(other.emails.technician, TEST_PASSWORD);
});
afterAll(() => server.close());

describe('intake', () => {
  it('the desk books a unit in: stage, customer from the unit, first trail entry', async () => {
    const cust = await c.front_desk.post<{ id: number }>('/api/customers', { name: 'Intake Person' });
    const unit = await c.front_desk.post<{ id: number }>('/api/units', { customerId: cust.body.id, kind: 'receiver', maker: 'Orrindale', model: 'T-9' });
    const res = await c.front_desk.post<JobDetail>('/api/jobs', {
      unitId: unit.body.id,
      reportedFault: 'Left channel fades after ten minutes',
      accessories: 'Remote',
      conditionNotes: 'Dent on the lid',
      assignedTechnicianId: c.techId,
    });
    expect(res.status).toBe(201);
    expect(res.body.status).toBe('booked_in');
    expect(res.body.customer.id).toBe(cust.body.id);
    expect(res.body.unit).toMatchObject({ id: unit.body.id, maker: 'Orrindale', model: 'T-9', kind: 'receiver' });
    expect(res.body.assignedTechnician?.id).toBe(c.techId);
    expect(res.body.reference).toBe(`J-${String(res.body.id).padStart(4, '0')}`);
    expect(res.body.events.map((e) => [e.kind, e.fromStatus, e.toStatus])).toEqual([['status', null, 'booked_in']]);
    expect(res.body.events[0]!.userName).toBe('Dara Quillfeather');
  });

  it.each([['technician'], ['customer']] as const)('%s may not book in (403)', async (role) => {
    const res = await c[role].post('/api/jobs', { unitId: 1, reportedFault: 'x' });
    expect(res.status).toBe(403);
  });

  it('owner may book in', async () => {
    const job = await bookJob(c.owner);
    expect(job.status).toBe('booked_in');
  });

  it('bad input is 400 with the fields named', async () => {
    const res = await c.front_desk.post<{ details: { path: string }[] }>('/api/jobs', { unitId: 'x', reportedFault: '  ' });
    expect(res.status).toBe(400);
    expect(res.body.details.map((d) => d.path)).toEqual(expect.arrayContaining(['unitId', 'reportedFault']));
  });

  it("another shop's unit is 404 and no job is written", async () => {
    const { db, close } = database();
    const before = (await db.select().from(jobs).where(eq(jobs.unitId, other.unitId))).length;
    const res = await c.front_desk.post('/api/jobs', { unitId: other.unitId, reportedFault: 'Hum' });
    expect(res.status).toBe(404);
    expect((await db.select().from(jobs).where(eq(jobs.unitId, other.unitId))).length).toBe(before);
    await close();
  });

  it('assigning someone who is not a bench user is 400, and nothing is half-written', async () => {
    const desk = await c.front_desk.get<{ user: { id: number } }>('/api/auth/me');
    const cust = await c.front_desk.post<{ id: number }>('/api/customers', { name: 'Half Written' });
    const unit = await c.front_desk.post<{ id: number }>('/api/units', { customerId: cust.body.id, kind: 'other', maker: 'M', model: 'N' });
    const res = await c.front_desk.post('/api/jobs', { unitId: unit.body.id, reportedFault: 'Dead', assignedTechnicianId: desk.body.user.id });
    expect(res.status).toBe(400);
    const { db, close } = database();
    expect(await db.select().from(jobs).where(eq(jobs.unitId, unit.body.id))).toEqual([]);
    await close();
  });
});

describe('reading one job', () => {
  it('staff read any job of the shop; another shop gets 404', async () => {
    const job = await bookJob(c.front_desk);
    for (const role of ['owner', 'technician', 'front_desk'] as const) {
      const res = await c[role].get<JobDetail>(`/api/jobs/${job.id}`);
      expect(res.status).toBe(200);
      expect(res.body.id).toBe(job.id);
      expect(res.body.currency).toBe('EUR');
    }
    expect((await otherTech.get(`/api/jobs/${job.id}`)).status).toBe(404);
  });

  it('a customer reads their own job but not another customer’s', async () => {
    const me = await c.customer.get<{ user: { customerId: number } }>('/api/auth/me');
    const mine = await bookJob(c.front_desk, { customerId: me.body.user.customerId });
    const theirs = await bookJob(c.front_desk);
    const own = await c.customer.get<JobDetail>(`/api/jobs/${mine.id}`);
    expect(own.status).toBe(200);
    expect(own.body.id).toBe(mine.id);
    expect((await c.customer.get(`/api/jobs/${theirs.id}`)).status).toBe(404);
  });

  it('a customer sees the stage history and customer notes, not staff notes', async () => {
    const me = await c.customer.get<{ user: { customerId: number } }>('/api/auth/me');
    const job = await bookJob(c.front_desk, { customerId: me.body.user.customerId });
    expect((await c.technician.post(`/api/jobs/${job.id}/status`, { to: 'diagnosis', note: 'Smells of burnt resistor' })).status).toBe(200);
    expect((await c.technician.post(`/api/jobs/${job.id}/notes`, { text: 'Customer seems to have opened it before' })).status).toBe(201);
    expect((await c.front_desk.post(`/api/jobs/${job.id}/notes`, { text: 'On the bench now', visibleToCustomer: true })).status).toBe(201);

    const staff = await c.owner.get<JobDetail>(`/api/jobs/${job.id}`);
    expect(staff.status).toBe(200);
    expect(staff.body.events.map((e) => e.kind)).toEqual(['status', 'status', 'note', 'customer_note']);
    expect(staff.body.events[1]!.note).toBe('Smells of burnt resistor');

    const customer = await c.customer.get<JobDetail>(`/api/jobs/${job.id}`);
    expect(customer.status).toBe(200);
    expect(customer.body.events.map((e) => [e.kind, e.toStatus, e.note])).toEqual([
      ['status', 'booked_in', ''],
      ['status', 'diagnosis', ''],
      ['customer_note', null, 'On the bench now'],
    ]);
    expect(JSON.stringify(customer.body)).not.toContain('opened it before');
    expect(JSON.stringify(customer.body)).not.toContain('burnt resistor');
  });
});

describe('notes, fault found, technician, intake edits', () => {
  it('fault found: bench writes it with a trail entry; the desk may not', async () => {
    const job = await bookJob(c.front_desk);
    expect((await c.front_desk.put(`/api/jobs/${job.id}/fault-found`, { text: 'x' })).status).toBe(403);
    const res = await c.technician.put<JobDetail>(`/api/jobs/${job.id}/fault-found`, { text: 'Cracked solder at the selector IC' });
    expect(res.status).toBe(200);
    expect(res.body.faultFound).toBe('Cracked solder at the selector IC');
    expect(res.body.events.at(-1)).toMatchObject({ kind: 'fault_found', note: 'Cracked solder at the selector IC', userName: 'Teo Marsh-Ellery' });
  });

  it('notes: staff add them, a customer may not, an empty note is 400', async () => {
    const job = await bookJob(c.front_desk);
    expect((await c.customer.post(`/api/jobs/${job.id}/notes`, { text: 'hi' })).status).toBe(403);
    expect((await c.technician.post(`/api/jobs/${job.id}/notes`, { text: '   ' })).status).toBe(400);
    expect((await otherTech.post(`/api/jobs/${job.id}/notes`, { text: 'sneaky' })).status).toBe(404);
  });

  it('assign: the desk assigns and unassigns, the bench may not, only bench users qualify', async () => {
    const job = await bookJob(c.front_desk);
    expect((await c.technician.put(`/api/jobs/${job.id}/technician`, { technicianId: c.techId })).status).toBe(403);
    const set = await c.front_desk.put<JobDetail>(`/api/jobs/${job.id}/technician`, { technicianId: c.techId });
    expect(set.status).toBe(200);
    expect(set.body.assignedTechnician).toEqual({ id: c.techId, name: 'Teo Marsh-Ellery' });
    expect(set.body.events.at(-1)).toMatchObject({ kind: 'assigned', note: 'Assigned to Teo Marsh-Ellery' });
    const otherTechId = (await otherTech.get<{ user: { id: number } }>('/api/auth/me')).body.user.id;
    expect((await c.front_desk.put(`/api/jobs/${job.id}/technician`, { technicianId: otherTechId })).status).toBe(400);
    const cleared = await c.front_desk.put<JobDetail>(`/api/jobs/${job.id}/technician`, { technicianId: null });
    expect(cleared.status).toBe(200);
    expect(cleared.body.assignedTechnician).toBeNull();
  });

  it('intake edits: desk only, recorded, nothing-to-change is 400', async () => {
    const job = await bookJob(c.front_desk);
    expect((await c.technician.patch(`/api/jobs/${job.id}`, { accessories: 'Cable' })).status).toBe(403);
    expect((await c.front_desk.patch(`/api/jobs/${job.id}`, {})).status).toBe(400);
    const res = await c.front_desk.patch<JobDetail>(`/api/jobs/${job.id}`, { accessories: 'Power cable', conditionNotes: 'Knob missing' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ accessories: 'Power cable', conditionNotes: 'Knob missing' });
    expect(res.body.events.at(-1)).toMatchObject({ kind: 'edited', note: 'Changed: accessories, condition notes' });
  });

  it('the technician list holds bench users of the shop only', async () => {
    const res = await c.front_desk.get<{ id: number; role: string }[]>('/api/technicians');
    expect(res.status).toBe(200);
    expect(res.body.map((t) => t.id)).toContain(c.techId);
    expect(new Set(res.body.map((t) => t.role))).toEqual(new Set(['technician', 'owner']));
    expect((await c.customer.get('/api/technicians')).status).toBe(403);
  });
});

describe('job list filters and order', () => {
  it('filters by search text, stage and technician', async () => {
    const tag = `Warble${Date.now()}`;
    const a = await bookJob(c.front_desk, { fault: `${tag} on tape`, technicianId: c.techId });
    const b = await bookJob(c.front_desk, { fault: `${tag} on tuner` });
    await c.technician.post(`/api/jobs/${a.id}/status`, { to: 'diagnosis' });

    const byText = await c.owner.get<JobSummary[]>(`/api/jobs?q=${tag}`);
    expect(byText.status).toBe(200);
    expect(byText.body.map((j) => j.id).sort()).toEqual([a.id, b.id].sort());

    const byStage = await c.owner.get<JobSummary[]>(`/api/jobs?q=${tag}&status=diagnosis`);
    expect(byStage.body.map((j) => j.id)).toEqual([a.id]);
    const byTech = await c.owner.get<JobSummary[]>(`/api/jobs?q=${tag}&technicianId=${c.techId}`);
    expect(byTech.body.map((j) => j.id)).toEqual([a.id]);
    const unassigned = await c.owner.get<JobSummary[]>(`/api/jobs?q=${tag}&technicianId=none`);
    expect(unassigned.body.map((j) => j.id)).toEqual([b.id]);
    const byRef = await c.owner.get<JobSummary[]>(`/api/jobs?q=${a.reference}`);
    expect(byRef.body.map((j) => j.id)).toEqual([a.id]);
  });

  it('sorts by stage and puts a technician’s own queue first', async () => {
    const tag = `Motorboat${Date.now()}`;
    const mineEarly = await bookJob(c.front_desk, { fault: tag, technicianId: c.techId });
    const notMine = await bookJob(c.front_desk, { fault: tag });
    await c.technician.post(`/api/jobs/${notMine.id}/status`, { to: 'diagnosis' });
    const byStage = await c.owner.get<JobSummary[]>(`/api/jobs?q=${tag}&sort=stage&dir=desc`);
    expect(byStage.body.map((j) => j.status)).toEqual(['diagnosis', 'booked_in']);
    // Updated most recently is notMine, yet the technician's own job comes first for them.
    const forTech = await c.technician.get<JobSummary[]>(`/api/jobs?q=${tag}`);
    expect(forTech.body.map((j) => j.id)).toEqual([mineEarly.id, notMine.id]);
    const forOwner = await c.owner.get<JobSummary[]>(`/api/jobs?q=${tag}`);
    expect(forOwner.body.map((j) => j.id)).toEqual([notMine.id, mineEarly.id]);
  });

  it('bad filters are 400', async () => {
    for (const q of ['status=fixed', 'technicianId=abc', 'sort=price', 'colour=red']) {
      const res = await c.owner.get<{ error: string }>(`/api/jobs?${q}`);
      expect(res.status, q).toBe(400);
    }
  });

  it('customerId narrows the list to one customer (customer detail page)', async () => {
    const a = await bookJob(c.front_desk);
    await bookJob(c.front_desk);
    const res = await c.front_desk.get<JobSummary[]>(`/api/jobs?customerId=${a.customer.id}`);
    expect(res.status).toBe(200);
    expect(res.body.map((j) => j.id)).toEqual([a.id]);
  });
});

describe('job list statements', () => {
  it('every list shape has its own prepared-statement name within PostgreSQL’s 63 characters', () => {
    const names = new Set<string>();
    let shapes = 0;
    for (const ownFirst of [true, false])
      for (const customerOnly of [true, false])
        for (const status of ['open', 'stage', null] as const)
          for (const technician of ['unassigned', 'one', null] as const)
            for (const customer of [true, false])
              for (const search of ['text', 'reference', null] as const)
                for (const sort of JOB_SORTS)
                  for (const dir of ['asc', 'desc'] as const) {
                    const name = listStatementName({ ownFirst, customerOnly, status, technician, customer, search, sort, dir });
                    expect(name.length).toBeLessThanOrEqual(63);
                    names.add(name);
                    shapes++;
                  }
    expect(names.size).toBe(shapes);
  });
});
