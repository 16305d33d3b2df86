import { randomUUID } from 'node:crypto';
import { expect } from 'vitest';
import { signedIn, type ApiClient } from './client';
import type { Role } from '../../shared/roles';
import type { UnitKind } from '../../shared/customers';
import type { JobDetail } from '../../shared/jobs';

export const DEMO_EMAILS: Record<Role, string> = {
  owner: 'owner@quietpath.test',
  technician: 'tech@quietpath.test',
  front_desk: 'desk@quietpath.test',
  customer: 'customer@quietpath.test',
};

/** One signed-in client per demo role (sign-in is slow by design, so do it once per file). */
export async function demoClients(url: string): Promise<Record<Role, ApiClient> & { techId: number }> {
  const out = {} as Record<Role, ApiClient>;
  for (const role of Object.keys(DEMO_EMAILS) as Role[]) out[role] = await signedIn(url, DEMO_EMAILS[role]);
  const me = await out.technician.get<{ user: { id: number } }>('/api/auth/me');
  return { ...out, techId: me.body.user.id };
}

export interface BookOptions {
  kind?: UnitKind;
  customerId?: number;
  fault?: string;
  technicianId?: number | null;
  maker?: string;
  model?: string;
}

/** A fresh customer (unless given), unit and job, booked in by `desk`, so each test owns its rows. */
export async function bookJob(desk: ApiClient, opts: BookOptions = {}): Promise<JobDetail> {
  const tag = randomUUID().slice(0, 8);
  let customerId = opts.customerId;
  if (!customerId) {
    const c = await desk.post<{ id: number }>('/api/customers', { name: `Bench Test ${tag}` });
    expect(c.status).toBe(201);
    customerId = c.body.id;
  }
  const u = await desk.post<{ id: number }>('/api/units', {
    customerId,
    kind: opts.kind ?? 'integrated_amplifier',
    maker: opts.maker ?? 'Harrowgate',
    model: opts.model ?? `IA-${tag}`,
  });
  expect(u.status).toBe(201);
  const j = await desk.post<JobDetail>('/api/jobs', {
    unitId: u.body.id,
    reportedFault: opts.fault ?? `Intermittent crackle ${tag}`,
    assignedTechnicianId: opts.technicianId ?? null,
  });
  expect(j.status).toBe(201);
  return j.body;
}
