import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { demoShop, makeBillableJob } from '../support/billing';
import { customers, mailboxMessages } from '../../server/db/schema/index';
import { parseMail } from '../../server/mail/mime';
import type { Db } from '../../server/db/client';
import type { Invoice, OutboxMessage, Quote, ShopSettings } from '../../shared/billing';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let db: Db;
let closeDb: () => Promise<void>;
let demo: { shopId: number; customerId: number };
let desk: ApiClient;

beforeAll(async () => {
  server = await startTestServer();
  ({ db, close: closeDb } = testDb());
  demo = await demoShop(db);
  desk = await signedIn(server.url, 'desk@quietpath.test');
});
afterAll(async () => {
  await server.close();
  await closeDb();
});

describe('outbox', () => {
  it('the invoice e-mail carries the invoice and the evidence report, as received by the local mailbox', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1 });
    const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    await desk.post(`/api/invoices/${inv.id}/send`);
    const list = await desk.get<OutboxMessage[]>(`/api/outbox?jobId=${jobId}`);
    expect(list.status).toBe(200);
    const [mail] = list.body;
    expect(mail).toMatchObject({ kind: 'invoice', status: 'sent', inLocalMailbox: true, invoiceId: inv.id });
    expect(mail!.attachments.map((a) => [a.filename, a.contentType])).toEqual([
      [`invoice-${inv.reference}.pdf`, 'application/pdf'],
      [`evidence-J-${String(jobId).padStart(4, '0')}.pdf`, 'application/pdf'],
    ]);

    // What the SMTP server received: the envelope, the parsed fields and the raw bytes.
    const [received] = await db.select().from(mailboxMessages).where(eq(mailboxMessages.subject, mail!.subject));
    expect(received!.envelopeTo).toEqual(['customer@quietpath.test']);
    expect(received!.envelopeFrom).toBe('bench@copperleaf.quietpath.test');
    expect(received!.shopId).toBe(demo.shopId);
    expect(received!.attachments.map((a) => a.size)).toEqual(mail!.attachments.map((a) => a.size));
    const reparsed = parseMail(received!.raw);

    for (const [i, meta] of mail!.attachments.entries()) {
      const res = await desk.raw('GET', `/api/outbox/${mail!.id}/attachments/${i}`);
      expect(res.status).toBe(200);
      expect(res.headers.get('content-type')).toBe('application/pdf');
      expect(res.headers.get('content-disposition')).toContain(meta.filename);
      const bytes = Buffer.from(await res.arrayBuffer());
      expect(bytes.length).toBe(meta.size);
      expect(bytes.equals(reparsed.attachments[i]!.content)).toBe(true);
      expect(bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    }
    expect((await desk.get(`/api/outbox/${mail!.id}/attachments/2`)).status).toBe(404);
  });

  it('is for the owner and the desk only; another shop sees none of it', async () => {
    const tech = await signedIn(server.url, 'tech@quietpath.test');
    const customer = await signedIn(server.url, 'customer@quietpath.test');
    expect((await tech.get('/api/outbox')).status).toBe(403);
    expect((await customer.get('/api/outbox')).status).toBe(403);
    const ours = (await desk.get<OutboxMessage[]>('/api/outbox')).body;
    expect(ours.length).toBeGreaterThan(0);
    const other = await makeShop(db, 'Outbox');
    const theirOwner = new ApiClient(server.url);
    await theirOwner.login(other.emails.owner, TEST_PASSWORD);
    const theirs = await theirOwner.get<OutboxMessage[]>('/api/outbox');
    expect(theirs.status).toBe(200);
    expect(theirs.body).toEqual([]);
    expect((await theirOwner.get(`/api/outbox/${ours[0]!.id}`)).status).toBe(404);
    expect((await theirOwner.get(`/api/outbox/${ours[0]!.id}/attachments/0`)).status).toBe(404);
  });

  it('a customer without an e-mail address gets a "skipped" entry, and the estimate still goes on the job', async () => {
    const [c] = await db.insert(customers).values({ shopId: demo.shopId, name: 'Walk-in, no e-mail' }).returning({ id: customers.id });
    const { jobId } = await makeBillableJob(db, { shopId: demo.shopId, customerId: c!.id });
    expect((await desk.post('/api/quotes', { jobId, amountMinor: 2000, text: 'Clean and check' })).status).toBe(201);
    const [mail] = (await desk.get<OutboxMessage[]>(`/api/outbox?jobId=${jobId}`)).body;
    expect(mail).toMatchObject({ status: 'skipped', inLocalMailbox: false });
    expect(mail!.error).toMatch(/no e-mail address/);
  });
});

describe('when the mail server is down', () => {
  it('the change is kept, the message is marked failed with the reason, and can be retried', async () => {
    const down = await startTestServer({ SMTP_URL: 'smtp://127.0.0.1:9' });
    try {
      const d = await signedIn(down.url, 'desk@quietpath.test');
      const { jobId } = await makeBillableJob(db, demo);
      const q = await d.post<Quote>('/api/quotes', { jobId, amountMinor: 3000, text: 'Estimate' });
      expect(q.status).toBe(201);
      const [mail] = (await d.get<OutboxMessage[]>(`/api/outbox?jobId=${jobId}`)).body;
      expect(mail!.status).toBe('failed');
      expect(mail!.error).not.toBe('');
      // Retried through a server whose mail works, the same stored message goes out.
      const retried = await desk.post<OutboxMessage>(`/api/outbox/${mail!.id}/retry`);
      expect(retried.status).toBe(200);
      expect(retried.body).toMatchObject({ status: 'sent', inLocalMailbox: true });
      expect((await desk.post(`/api/outbox/${mail!.id}/retry`)).status).toBe(409);
    } finally {
      await down.close();
    }
  });
});

describe('shop settings', () => {
  it('the owner sets rate, tax, currency and details; new invoices use them, earlier ones keep theirs', async () => {
    const other = await makeShop(db, 'Settings');
    const owner = new ApiClient(server.url);
    await owner.login(other.emails.owner, TEST_PASSWORD);
    const theirDesk = new ApiClient(server.url);
    await theirDesk.login(other.emails.front_desk, TEST_PASSWORD);
    const before = (await theirDesk.post<Invoice>('/api/invoices', { jobId: other.jobId })).body;

    const settings: ShopSettings = { name: 'Lantern Row Repairs', email: 'desk@lantern.test', address: '1 Lantern Row', currency: 'GBP', labourRateMinor: 5500, taxRateBp: 1750, invoicePrefix: 'LRR' };
    const put = await owner.put<ShopSettings>('/api/settings/shop', settings);
    expect(put.status).toBe(200);
    expect(put.body).toEqual(settings);
    expect((await owner.get<ShopSettings>('/api/settings/shop')).body).toEqual(settings);

    const after = (await theirDesk.post<Invoice>('/api/invoices', { jobId: other.jobId })).body;
    expect(after).toMatchObject({ currency: 'GBP', taxRateBp: 1750, reference: `LRR-${String(before.number + 1).padStart(4, '0')}` });
    const again = (await theirDesk.get<Invoice>(`/api/invoices/${before.id}`)).body;
    expect(again).toMatchObject({ currency: before.currency, taxRateBp: before.taxRateBp, reference: before.reference });
  });

  it('refuses bad values (400) and every role but the owner (403)', async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const current = (await owner.get<ShopSettings>('/api/settings/shop')).body;
    const bad = await owner.put<{ details: { path: string }[] }>('/api/settings/shop', { ...current, taxRateBp: 10_001, currency: 'XYZ', invoicePrefix: 'a b' });
    expect(bad.status).toBe(400);
    expect(bad.body.details.map((d) => d.path)).toEqual(expect.arrayContaining(['taxRateBp', 'currency', 'invoicePrefix']));
    expect((await owner.get<ShopSettings>('/api/settings/shop')).body).toEqual(current);
    for (const email of ['desk@quietpath.test', 'tech@quietpath.test', 'customer@quietpath.test']) {
      const c = await signedIn(server.url, email);
      expect((await c.get('/api/settings/shop')).status).toBe(403);
      expect((await c.put('/api/settings/shop', current)).status).toBe(403);
    }
  });
});
