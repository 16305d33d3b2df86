import { parseArgs } from 'node:util';
import { z } from 'zod';
import { capturePhaseSchema, captureFileMetaSchema, MAX_FILES_PER_UPLOAD, type CaptureFileMetaInput } from '../../shared/captures';
import { stimulusSchema } from '../../shared/analysis-result';
import { jobIdFromReference } from '../../shared/search';

/** Exit codes of `npm run push`; the README lists them too. */
export const EXIT = {
  ok: 0,
  /** Uploaded, but the analysis of at least one capture failed. */
  analysisFailed: 1,
  usage: 2,
  /** Token missing, unknown, expired, revoked, or not allowed to upload. */
  token: 3,
  /** No such job in the token's shop, or no such test point on the job. */
  notFound: 4,
  /** The server refused the files (not a WAV, too large, bad details). */
  refused: 5,
  /** The server could not be reached or answered with an error of its own. */
  server: 6,
  /** The analysis did not finish within --wait seconds. */
  timeout: 7,
} as const;

export class PushError extends Error {
  constructor(
    message: string,
    readonly exitCode: number,
  ) {
    super(message);
  }
}

export const USAGE = `Usage: npm run push -- FILE.wav... --job J-0001 --point "Test point name" --phase before|after
         [--stimulus tone|silence|sweep|programme] [--selected INPUT] [--driven INPUT]
         [--notes TEXT] [--wait SECONDS] [--json]
Environment: QUIETPATH_TOKEN (an API token with the "upload captures" scope, from My account),
             QUIETPATH_URL (default http://127.0.0.1:3000)`;

export interface PushOptions {
  files: string[];
  jobId: number;
  jobText: string;
  point: string;
  meta: Omit<CaptureFileMetaInput, 'testPointId'>;
  waitS: number;
  json: boolean;
  baseUrl: string;
  token: string;
}

const usage = (message: string) => new PushError(`${message}\n\n${USAGE}`, EXIT.usage);

function pick<T>(schema: z.ZodType<T>, value: string | undefined, what: string): T | undefined {
  if (value === undefined) return undefined;
  const parsed = schema.safeParse(value);
  if (!parsed.success) throw usage(`${what} "${value}" is not one of the accepted values`);
  return parsed.data;
}

/** Reads the command line and the environment; anything missing or malformed is a usage error. */
export function parsePushArgs(argv: string[], env: NodeJS.ProcessEnv): PushOptions {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      options: {
        job: { type: 'string' },
        point: { type: 'string' },
        phase: { type: 'string' },
        stimulus: { type: 'string' },
        selected: { type: 'string' },
        driven: { type: 'string' },
        notes: { type: 'string' },
        wait: { type: 'string' },
        json: { type: 'boolean', default: false },
        help: { type: 'boolean', default: false },
      },
    });
  } catch (err) {
    throw usage(err instanceof Error ? err.message : String(err));
  }
  const { values, positionals } = parsed;
  if (values.help) throw new PushError(USAGE, EXIT.ok);
  if (positionals.length === 0) throw usage('Name at least one WAV file');
  if (positionals.length > MAX_FILES_PER_UPLOAD) throw usage(`At most ${MAX_FILES_PER_UPLOAD} files per push`);
  if (!values.job) throw usage('Say which job: --job J-0001');
  const jobId = jobIdFromReference(values.job);
  if (jobId === null || jobId <= 0) throw usage(`"${values.job}" is not a job reference like J-0001`);
  if (!values.point?.trim()) throw usage('Say which test point: --point "Input selector output"');
  const phase = pick(capturePhaseSchema, values.phase, '--phase');
  if (!phase) throw usage('Say whether the captures are from --phase before or --phase after the repair');
  const stimulus = pick(stimulusSchema, values.stimulus, '--stimulus') ?? 'tone';
  const waitS = values.wait === undefined ? 300 : Number(values.wait);
  if (!Number.isFinite(waitS) || waitS <= 0) throw usage('--wait takes a number of seconds');
  const token = env.QUIETPATH_TOKEN?.trim();
  if (!token) throw new PushError('Set QUIETPATH_TOKEN to an API token with the "upload captures" scope (create one under My account)', EXIT.token);
  const baseUrl = (env.QUIETPATH_URL?.trim() || 'http://127.0.0.1:3000').replace(/\/+$/, '');
  try {
    new URL(baseUrl);
  } catch {
    throw usage(`QUIETPATH_URL "${baseUrl}" is not a URL`);
  }

  const meta: Record<string, unknown> = { phase, stimulus, notes: values.notes ?? '' };
  // Input tags go in only when given; the server matches them to the unit's inputs.
  if (values.selected !== undefined) meta.selectedInput = values.selected;
  if (values.driven !== undefined) meta.drivenInput = values.driven;
  const checked = captureFileMetaSchema.safeParse({ ...meta, testPointId: 1 });
  if (!checked.success) {
    const issue = checked.error.issues[0]!;
    const field = String(issue.path[0] ?? '');
    const flag = field === 'selectedInput' ? '--selected' : field === 'drivenInput' ? '--driven' : `--${field}`;
    throw usage(`${flag}: ${issue.message}`);
  }
  return { files: positionals, jobId, jobText: values.job, point: values.point.trim(), meta: meta as PushOptions['meta'], waitS, json: values.json, baseUrl, token };
}
