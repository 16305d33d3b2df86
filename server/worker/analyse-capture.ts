import { eq, sql } from 'drizzle-orm';
import { AnalyzeOptionsError, analyzeWavStream, ENGINE_VERSION, WavFormatError } from '../../analysis/index';
import { analysisResultSchema, type AnalysisResult, type AnalyzeOptions } from '../../shared/analysis-result';
import { figuresFromResult, type CaptureFigures } from '../../shared/capture-figures';
import { CROSSTALK_TONE_HZ } from '../../shared/input-crosstalk';
import type { Db } from '../db/client';
import { analyses, calibrationProfiles, captures } from '../db/schema/index';
import { captureKey, readCapture } from '../services/capture-storage';
import type { FileStore } from '../storage/file-store';
import { analyzeFileInThreads } from './channel-threads';

// One analysis run: stream the stored WAV through the engine with the capture's settings and
// store the result. Called by the queue worker; safe to call twice for the same capture.

export interface Attempt {
  /** Retries already made (0 on the first run). */
  retryCount: number;
  retryLimit: number;
}

export type AnalyseOutcome = 'done' | 'failed' | 'skipped';

/** An error that will not go away on a retry: a damaged or missing file. */
function isPermanent(err: unknown): boolean {
  return err instanceof WavFormatError || err instanceof AnalyzeOptionsError || (err as NodeJS.ErrnoException)?.code === 'ENOENT';
}

function describe(err: unknown): string {
  if ((err as NodeJS.ErrnoException)?.code === 'ENOENT') return 'the stored file is missing';
  return err instanceof Error ? err.message : String(err);
}

/** The engine's result checked against the shared schema (no NaN reaches the database), and its headline figures. */
export function checkedResult(raw: unknown, loadOhms: number | null): { result: AnalysisResult; figures: CaptureFigures } {
  const result = analysisResultSchema.parse(raw);
  return { result, figures: figuresFromResult(result, { loadOhms }) };
}

export async function analyseCapture(db: Db, store: FileStore, captureId: number, attempt: Attempt): Promise<AnalyseOutcome> {
  const [row] = await db
    .select({ capture: captures, calibration: calibrationProfiles })
    .from(captures)
    .leftJoin(calibrationProfiles, eq(calibrationProfiles.id, captures.calibrationId))
    .where(eq(captures.id, captureId));
  if (!row) return 'skipped'; // deleted since it was queued
  const { capture, calibration } = row;
  if (capture.state === 'done') return 'skipped'; // a duplicate job; re-analysis sets 'queued' first

  await db.update(captures).set({ state: 'running', error: null }).where(eq(captures.id, captureId));
  const options: AnalyzeOptions = { stimulus: capture.stimulus };
  if (capture.drivenChannel !== null) options.drivenChannel = capture.drivenChannel;
  // A capture for the input-crosstalk matrix: its leaked tone may sit under hum, so look for it where it was sent.
  if (capture.stimulus === 'tone' && capture.drivenInput !== null && capture.selectedInput !== null) options.toneHz = CROSSTALK_TONE_HZ;
  if (calibration) {
    options.voltsAtFullScale = calibration.voltsAtFullScale;
    options.probeAttenuation = calibration.probeAttenuation;
  }

  try {
    // A capture on this node's disk is measured in worker threads, so this process's event loop
    // (the HTTP requests, in the server) stays free: the threads warmed up at start take any
    // length, new ones are started only for a long capture (see THREAD_BREAK_EVEN_SAMPLES); a
    // short one without warm threads is measured here in small reads (requests wait between
    // chunks). A capture in a bucket is streamed from the store here: never the whole file in memory.
    const localPath = store.localPath(captureKey(capture.sha256));
    const raw = localPath
      ? await analyzeFileInThreads(localPath, options, { shareCallingThread: false, chunkBytes: 256 * 1024, keepThreads: true })
      : await analyzeWavStream(await readCapture(store, capture.sha256), options);
    const { result, figures } = checkedResult(raw, capture.loadOhms);
    const headline = {
      engineVersion: result.engineVersion || ENGINE_VERSION,
      rmsDbfs: figures.levelDbfs,
      thdPct: figures.thdPct,
      thdnDb: figures.thdnDb,
      noiseDbfsA: figures.noiseDbfsA,
      separationDb: figures.separationDb,
      clickCount: figures.clickCount,
      humDbfs: figures.humDbfs,
      figures,
      result,
      createdAt: new Date(),
    };
    await db.transaction(async (tx) => {
      // Not waiting for this commit to reach the disk saves a flush (3 ms here) on every capture,
      // and loses nothing: pg-boss completes the job afterwards in a commit that is flushed, and
      // flushing it flushes this one; should the database stop before that, the job was never
      // completed, the capture is still 'running', and the retry measures it again.
      await tx.execute(sql`set local synchronous_commit = off`);
      await tx
        .insert(analyses)
        .values({ shopId: capture.shopId, captureId, ...headline })
        .onConflictDoUpdate({ target: analyses.captureId, set: headline });
      await tx.update(captures).set({ state: 'done', error: null }).where(eq(captures.id, captureId));
    });
    return 'done';
  } catch (err) {
    const lastTry = isPermanent(err) || attempt.retryCount >= attempt.retryLimit;
    const message = describe(err);
    await db
      .update(captures)
      .set(
        lastTry
          ? { state: 'failed', error: message }
          : { state: 'queued', error: `Attempt ${attempt.retryCount + 1} failed (${message}); trying again` },
      )
      .where(eq(captures.id, captureId));
    if (isPermanent(err)) return 'failed';
    throw err; // pg-boss records the failure and schedules the retry
  }
}
