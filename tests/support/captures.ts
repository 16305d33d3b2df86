import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '../../server/db/client';
import { jobs, shops, testPoints } from '../../server/db/schema/index';
import type { CaptureFileMetaInput, CaptureSummary } from '../../shared/captures';
import type { ApiClient, Answer } from './client';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));

export const sample = (name: string): Uint8Array => new Uint8Array(readFileSync(resolve(root, 'samples-synthetic', name)));

/** A fresh job on the demo shop's amplifier with its own three test points, so tests do not share rows. */
export async function makeBenchJob(db: Db) {
  const [demo] = await db.select().from(jobs).orderBy(jobs.id).limit(1);
  const [shop] = await db.select({ id: shops.id }).from(shops).where(eq(shops.id, demo!.shopId));
  const [job] = await db
    .insert(jobs)
    .values({ shopId: shop!.id, unitId: demo!.unitId, customerId: demo!.customerId, status: 'diagnosis', reportedFault: `Crackle ${randomUUID().slice(0, 6)}` })
    .returning({ id: jobs.id });
  const tps = await db
    .insert(testPoints)
    .values(['Input socket', 'Input selector output', 'Speaker terminals'].map((name, i) => ({ shopId: shop!.id, jobId: job!.id, position: i + 1, name })))
    .returning({ id: testPoints.id });
  return { shopId: shop!.id, jobId: job!.id, testPointIds: tps.map((t) => t.id) };
}

export interface UploadFile {
  name: string;
  bytes: Uint8Array;
  meta: CaptureFileMetaInput;
}

export function uploadForm(files: UploadFile[], metadata: unknown = files.map((f) => f.meta)): FormData {
  const form = new FormData();
  form.append('metadata', JSON.stringify(metadata));
  for (const f of files) form.append('files', new Blob([f.bytes as Uint8Array<ArrayBuffer>], { type: 'audio/wav' }), f.name);
  return form;
}

export function upload(client: ApiClient, jobId: number, files: UploadFile[], metadata?: unknown): Promise<Answer<{ captures: CaptureSummary[]; error?: string }>> {
  return client.call('POST', `/api/jobs/${jobId}/captures`, uploadForm(files, metadata));
}

/** Polls the job's captures (every 100 ms) until none of `ids` is queued or running. */
export async function waitForAnalysis(client: ApiClient, jobId: number, ids: number[], timeoutMs = 45_000): Promise<CaptureSummary[]> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const res = await client.get<CaptureSummary[]>(`/api/jobs/${jobId}/captures`);
    if (res.status !== 200) throw new Error(`listing captures answered ${res.status}`);
    const mine = res.body.filter((c) => ids.includes(c.id));
    if (mine.length === ids.length && mine.every((c) => c.state === 'done' || c.state === 'failed')) return mine;
    if (Date.now() > until) throw new Error(`analysis did not finish: ${JSON.stringify(mine.map((c) => [c.id, c.state, c.error]))}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}
