/**
 * CSV downloads of a job's measured figures and of its signal-path table. Expected figures are the
 * synthetic samples' construction (samples-synthetic/README.md); the CSV layout is RFC 4180.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { makeBenchJob, sample, upload, waitForAnalysis } from '../support/captures';
import { testPoints } from '../../server/db/schema/index';
import { safeText } from '../../server/services/csv-export';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let tech: ApiClient;
let bench: Awaited<ReturnType<typeof makeBenchJob>>;
const { db, close } = testDb();

/** A small RFC 4180 reader for the checks: quoted fields, doubled quotes, CRLF records. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let cell = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!;
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') (cell += '"'), i++;
      else if (ch === '"') quoted = false;
      else cell += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') row.push(cell), (cell = '');
    else if (ch === '\r' && text[i + 1] === '\n') row.push(cell), rows.push(row), (row = []), (cell = ''), i++;
    else cell += ch;
  }
  if (cell || row.length) row.push(cell), rows.push(row);
  return rows;
}

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
  bench = await makeBenchJob(db);
  // A name with a comma and quotes, to prove the quoting.
  await db.update(testPoints).set({ name: 'Selector "B", output' }).where(eq(testPoints.id, bench.testPointIds[1]!));
  const res = await upload(tech, bench.jobId, [
    { name: 'harmonics.wav', bytes: sample('tone-997hz-harmonics.wav'), meta: { phase: 'before', stimulus: 'tone', testPointId: bench.testPointIds[1]!, selectedInput: 'disc', drivenInput: 'disc' } },
    { name: 'clean.wav', bytes: sample('tone-997hz-clean.wav'), meta: { phase: 'after', stimulus: 'tone', testPointId: bench.testPointIds[1]! } },
  ]);
  expect(res.status).toBe(201);
  await waitForAnalysis(tech, bench.jobId, res.body.captures.map((c) => c.id));
});
afterAll(async () => {
  await server?.close();
  await close();
});

describe('CSV export', () => {
  it("the job's figures: one row per measured capture, THD as built into the sample", async () => {
    const res = await tech.raw('GET', `/api/jobs/${bench.jobId}/figures.csv`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^text\/csv/);
    expect(res.headers.get('content-disposition')).toMatch(/attachment; filename="J-\d{4,}-figures\.csv"/);
    const text = await res.text();
    expect(text.endsWith('\r\n')).toBe(true);
    const [header, ...rows] = parseCsv(text);
    expect(rows).toHaveLength(2);
    const col = (name: string) => header!.indexOf(name);
    expect(col('THD (%)')).toBeGreaterThan(0);
    const harmonics = rows.find((r) => r[col('File')] === 'harmonics.wav')!;
    // Built with 1 % 2nd and 0.5 % 3rd harmonic: THD = √(1² + 0.5²) = 1.118 % (samples README).
    expect(Number(harmonics[col('THD (%)')])).toBeCloseTo(1.118, 2);
    expect(Number(harmonics[col('Level (dBFS)')])).toBeCloseTo(-10, 1);
    expect(harmonics[col('Test point')]).toBe('Selector "B", output');
    expect(harmonics[col('Phase')]).toBe('before');
    expect([harmonics[col('Selected input')], harmonics[col('Driven input')]]).toEqual(['Disc', 'Disc']);
    expect(rows.every((r) => r.length === header!.length)).toBe(true);
  });

  it('the signal-path table: every test point in order, with before and after figures', async () => {
    const res = await tech.raw('GET', `/api/jobs/${bench.jobId}/signal-path.csv`);
    expect(res.status).toBe(200);
    const [header, ...rows] = parseCsv(await res.text());
    expect(rows.map((r) => r[header!.indexOf('Test point')])).toEqual(['Input socket', 'Selector "B", output', 'Speaker terminals']);
    const selector = rows[1]!;
    expect(Number(selector[header!.indexOf('Before THD (%)')])).toBeCloseTo(1.118, 2);
    expect(selector[header!.indexOf('After file')]).toBe('clean.wav');
    expect(rows[0]![header!.indexOf('Before file')]).toBe('');
  });

  it('is staff only and shop-scoped', async () => {
    const customer = await signedIn(server.url, 'customer@quietpath.test');
    expect((await customer.raw('GET', `/api/jobs/${bench.jobId}/figures.csv`)).status).toBe(403);
    expect((await tech.raw('GET', '/api/jobs/2000000000/signal-path.csv')).status).toBe(404);
  });

  it('text a spreadsheet would run as a formula is defused', () => {
    expect(safeText('=HYPERLINK("x")')).toBe(`'=HYPERLINK("x")`);
    expect(safeText('-1+2')).toBe(`'-1+2`);
    expect(safeText('Input socket')).toBe('Input socket');
  });
});
