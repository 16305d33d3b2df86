/**
 * Playback of stored captures with HTTP range requests (RFC 9110 §14: 206 Partial Content with
 * Content-Range, 416 when nothing of the range exists, the whole file for no Range header).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { makeBenchJob, sample, upload } from '../support/captures';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let tech: ApiClient;
let desk: ApiClient;
let customer: ApiClient;
let theirs: ApiClient;
let ours: { id: number; bytes: Uint8Array };
let theirCaptureId: number;
const { db, close } = testDb();

beforeAll(async () => {
  server = await startTestServer();
  [tech, desk, customer] = await Promise.all(['tech', 'desk', 'customer'].map((who) => signedIn(server.url, `${who}@quietpath.test`)));
  const job = await makeBenchJob(db);
  const bytes = sample('tone-997hz-clicks.wav');
  const res = await upload(tech, job.jobId, [{ name: 'clicks.wav', bytes, meta: { testPointId: job.testPointIds[0]!, phase: 'before', stimulus: 'tone' } }]);
  expect(res.status).toBe(201);
  ours = { id: res.body.captures[0]!.id, bytes };
  const other = await makeShop(db, 'Playback');
  theirs = new ApiClient(server.url);
  await theirs.login(other.emails.technician, TEST_PASSWORD);
  const up = await upload(theirs, other.jobId, [{ name: 'theirs.wav', bytes: sample('tone-997hz-harmonics.wav'), meta: { phase: 'before', stimulus: 'tone' } }]);
  expect(up.status).toBe(201);
  theirCaptureId = up.body.captures[0]!.id;
});
afterAll(async () => {
  await server?.close();
  await close();
});

const get = (client: ApiClient, id: number, range?: string) => client.raw('GET', `/api/captures/${id}/audio`, undefined, range ? { headers: { range } } : {});
const body = async (res: Response) => new Uint8Array(await res.arrayBuffer());

describe('capture playback', () => {
  it('answers a byte range with 206 and exactly those bytes', async () => {
    const size = ours.bytes.length;
    for (const [range, start, end] of [
      ['bytes=0-43', 0, 43],
      ['bytes=1000-66535', 1000, 66535],
      ['bytes=-500', size - 500, size - 1],
      [`bytes=${size - 10}-`, size - 10, size - 1],
    ] as const) {
      const res = await get(tech, ours.id, range);
      expect(res.status, range).toBe(206);
      expect(res.headers.get('content-range')).toBe(`bytes ${start}-${end}/${size}`);
      expect(res.headers.get('content-length')).toBe(String(end - start + 1));
      expect(res.headers.get('content-type')).toMatch(/^audio\/(wav|x-wav|wave)/);
      expect(Buffer.compare(await body(res), ours.bytes.subarray(start, end + 1))).toBe(0);
    }
  });

  it('without a Range header sends the whole file and says ranges are accepted', async () => {
    const res = await get(desk, ours.id);
    expect(res.status).toBe(200);
    expect(res.headers.get('accept-ranges')).toBe('bytes');
    expect(Buffer.compare(await body(res), ours.bytes)).toBe(0);
  });

  it('a range past the end answers 416 with the file length', async () => {
    const res = await get(tech, ours.id, `bytes=${ours.bytes.length + 5}-`);
    expect(res.status).toBe(416);
    expect(res.headers.get('content-range')).toBe(`bytes */${ours.bytes.length}`);
  });

  it("refuses another shop's capture (404, no bytes) and the customer role (403)", async () => {
    const res = await get(tech, theirCaptureId, 'bytes=0-99');
    expect(res.status).toBe(404);
    expect((await res.json()) as unknown).toMatchObject({ code: 'not_found' });
    // The same capture plays for its own shop, so the refusal is the shop check, not a missing file.
    expect((await get(theirs, theirCaptureId, 'bytes=0-99')).status).toBe(206);
    expect((await get(customer, ours.id, 'bytes=0-99')).status).toBe(403);
  });
});
