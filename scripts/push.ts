// Command line: upload WAV captures to a job's test point with an API token, wait for the
// analysis and print the headline figures.
//   QUIETPATH_TOKEN=qpt_… npm run -s push -- FILE.wav... --job J-0001 --point "Input selector output"
//     --phase before|after [--stimulus tone] [--selected INPUT] [--driven INPUT] [--notes TEXT]
//     [--wait SECONDS] [--json]
// Exit codes: see EXIT in scripts/lib/push-args.ts and the README.
import { access, stat } from 'node:fs/promises';
import { constants } from 'node:fs';
import { pathToFileURL } from 'node:url';
import type { CaptureSummary } from '../shared/captures';
import { formatBytes } from '../shared/captures';
import type { CaptureFigures } from '../shared/capture-figures';
import { EXIT, parsePushArgs, PushError, type PushOptions } from './lib/push-args';
import { parseUpload, PushApi } from './lib/push-api';
import { postMultipart } from './lib/multipart-upload';

/** Above this, the upload shows its progress. */
const PROGRESS_FROM_BYTES = 5_000_000;
const POLL_MS = 500;

const norm = (s: string) => s.trim().replace(/\s+/g, ' ').toLowerCase();

function progressPrinter(total: number, quiet: boolean) {
  if (quiet || total < PROGRESS_FROM_BYTES) return () => {};
  const tty = process.stderr.isTTY;
  let lastTenth = -1;
  return (sent: number) => {
    const pct = Math.floor((sent / total) * 100);
    if (tty) {
      process.stderr.write(`\rUploading ${formatBytes(sent)} of ${formatBytes(total)} (${pct} %)${sent >= total ? '\n' : ''}`);
    } else if (Math.floor(pct / 10) > lastTenth) {
      lastTenth = Math.floor(pct / 10);
      process.stderr.write(`Uploading: ${pct} % of ${formatBytes(total)}\n`);
    }
  };
}

const fixed = (v: number | null | undefined, digits: number, unit: string) => (v === null || v === undefined ? '–' : `${v.toFixed(digits)} ${unit}`);

/** The headline figures of one capture on one line. */
export function headline(f: CaptureFigures): string {
  const parts = [
    `level ${fixed(f.levelDbfs, 1, 'dBFS')}`,
    // Significant figures rather than decimals: a clean stage reads 0.00007 %, a faulty one 1.2 %.
    `THD ${f.thdPct === null ? '–' : `${Number(f.thdPct.toPrecision(2))} %`}`,
    `THD+N ${fixed(f.thdnDb, 1, 'dB')}`,
    `noise (A) ${fixed(f.noiseDbfsA, 1, 'dBFS')}`,
    `separation ${f.separationDb === null ? '–' : `${f.separationNoiseLimited ? '≥ ' : ''}${f.separationDb.toFixed(1)} dB`}`,
    `clicks ${f.clickCount}`,
    `hum ${fixed(f.humDbfs, 1, 'dBFS')}`,
  ];
  return parts.join(' · ');
}

async function waitForAll(api: PushApi, ids: number[], waitS: number): Promise<CaptureSummary[]> {
  const until = Date.now() + waitS * 1000;
  for (;;) {
    const all = await Promise.all(ids.map((id) => api.capture(id)));
    if (all.every((c) => c.state === 'done' || c.state === 'failed')) return all;
    if (Date.now() > until) {
      const left = all.filter((c) => c.state !== 'done' && c.state !== 'failed').map((c) => c.originalName);
      throw new PushError(`Uploaded, but the analysis of ${left.join(', ')} did not finish within ${waitS} s; the results will appear on the job page`, EXIT.timeout);
    }
    await new Promise((r) => setTimeout(r, POLL_MS));
  }
}

export async function push(opts: PushOptions, out: (line: string) => void): Promise<number> {
  for (const f of opts.files) {
    try {
      await access(f, constants.R_OK);
      if (!(await stat(f)).isFile()) throw new Error('not a file');
    } catch {
      throw new PushError(`Cannot read "${f}"`, EXIT.usage);
    }
  }
  const api = new PushApi(opts.baseUrl, opts.token);
  const job = await api.job(opts.jobId, opts.jobText);
  const points = await api.testPoints(job.id);
  const point = points.find((p) => norm(p.name) === norm(opts.point));
  if (!point) {
    const names = points.map((p) => `"${p.name}"`).join(', ');
    throw new PushError(`Job ${job.reference} has no test point "${opts.point}"${names ? `; its test points are ${names}` : ' (it has no test points yet)'}`, EXIT.notFound);
  }
  const sizes = await Promise.all(opts.files.map(async (f) => (await stat(f)).size));
  const total = sizes.reduce((a, b) => a + b, 0);
  const progress = progressPrinter(total, false);
  let answer;
  try {
    answer = await postMultipart(
      `${api.baseUrl}/api/jobs/${job.id}/captures`,
      api.authHeader,
      { metadata: JSON.stringify(opts.files.map(() => ({ ...opts.meta, testPointId: point.id }))) },
      opts.files.map((path) => ({ field: 'files', path, type: 'audio/wav' })),
      (sent) => progress(sent),
    );
  } catch (err) {
    throw new PushError(`The upload to ${api.baseUrl} broke off: ${err instanceof Error ? err.message : String(err)}`, EXIT.server);
  }
  const uploaded = parseUpload(answer.status, answer.body, opts.jobText).captures;
  if (!opts.json) out(`Uploaded ${uploaded.length} capture${uploaded.length === 1 ? '' : 's'} to ${job.reference}, "${point.name}", ${opts.meta.phase} the repair; measuring…`);
  const done = await waitForAll(api, uploaded.map((c) => c.id), opts.waitS);
  const failed = done.filter((c) => c.state === 'failed');
  if (opts.json) {
    out(
      JSON.stringify(
        {
          job: job.reference,
          testPoint: point.name,
          phase: opts.meta.phase,
          captures: done.map((c) => ({ id: c.id, file: c.originalName, state: c.state, error: c.error, figures: c.figures })),
        },
        null,
        2,
      ),
    );
  } else {
    for (const c of done) {
      out(`${c.originalName}: ${c.state === 'done' && c.figures ? headline(c.figures) : `analysis failed: ${c.error ?? 'no reason given'}`}`);
    }
    out(`See ${api.baseUrl}/jobs/${job.id}/measurements`);
  }
  return failed.length ? EXIT.analysisFailed : EXIT.ok;
}

async function main() {
  try {
    const opts = parsePushArgs(process.argv.slice(2), process.env);
    process.exitCode = await push(opts, (line) => process.stdout.write(`${line}\n`));
  } catch (err) {
    if (err instanceof PushError) {
      (err.exitCode === EXIT.ok ? process.stdout : process.stderr).write(`${err.message}\n`);
      process.exitCode = err.exitCode;
    } else {
      process.stderr.write(`Unexpected error: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
      process.exitCode = EXIT.server;
    }
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) void main();
