import { createReadStream } from 'node:fs';
import { open } from 'node:fs/promises';
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import { MAX_HEADER_BYTES, WavFormatError, readWavInfo } from '../../analysis/wav-header';
import { FrameDecoder } from '../../analysis/wav-decode';
import type { WavInfo } from '../../shared/analysis-result';
import type { CaptureFileMeta, CaptureSummary } from '../../shared/captures';
import type { CaptureFigures } from '../../shared/capture-figures';
import { powerFromDbv } from '../../shared/power';
import type { Db, DbOrTx } from '../db/client';
import { analyses, calibrationProfiles, captures, jobs, testPoints, units, users } from '../db/schema/index';
import { matchInput } from '../../shared/inputs';
import { unitInputs } from './customers';
import { HttpError, badRequest, notFound } from '../http-error';
import type { AnalysisQueue } from './analysis-queue';
import { captureKey, storeContentAddressed } from './capture-storage';
import type { FileStore } from '../storage/file-store';

/** One uploaded file as the storage engine left it in the temp folder. */
export interface StagedFile {
  originalName: string;
  tempPath: string;
  size: number;
  sha256: string;
  head: Uint8Array;
}

interface CheckedFile {
  file: StagedFile;
  meta: CaptureFileMeta;
  info: WavInfo;
}

/** The header from the kept first bytes; a header longer than those is read again from the file. */
async function readHeader(file: StagedFile): Promise<WavInfo> {
  try {
    return readWavInfo(file.head, { fileSize: file.size });
  } catch (err) {
    if (!(err instanceof WavFormatError && err.code === 'header-incomplete' && file.size > file.head.length)) throw err;
    const handle = await open(file.tempPath, 'r');
    try {
      const buf = new Uint8Array(Math.min(file.size, MAX_HEADER_BYTES));
      await handle.read(buf, 0, buf.length, 0);
      return readWavInfo(buf, { fileSize: file.size });
    } finally {
      await handle.close();
    }
  }
}

/**
 * Float samples can be NaN or infinite, which no measurement survives; integer PCM cannot. Such
 * a file is refused at upload by decoding its samples once (the engine's decoder names the first
 * bad sample), rather than failing later in the queue.
 */
async function checkFloatSamples(file: StagedFile, info: WavInfo): Promise<void> {
  if (info.format !== 'float') return;
  const decoder = new FrameDecoder(info, () => undefined);
  const stream = createReadStream(file.tempPath, { start: info.dataOffset, highWaterMark: 256 * 1024 });
  try {
    for await (const chunk of stream) decoder.push(chunk as Buffer);
  } finally {
    stream.destroy();
  }
}

/**
 * Checks a whole upload before anything is stored: each file is a WAV we can read, its driven
 * channel exists, its test point is on this job and its calibration in this shop. The first
 * problem refuses the whole batch, with the file named.
 */
export async function checkUpload(db: DbOrTx, shopId: number, jobId: number, files: StagedFile[], meta: CaptureFileMeta[]): Promise<CheckedFile[]> {
  if (files.length === 0) throw badRequest('Choose at least one WAV file to upload');
  if (meta.length !== files.length) {
    throw badRequest(`Got ${files.length} file${files.length === 1 ? '' : 's'} but details for ${meta.length}; send one metadata entry per file`);
  }
  const checked: CheckedFile[] = [];
  for (const [i, file] of files.entries()) {
    let info: WavInfo;
    try {
      info = await readHeader(file);
      await checkFloatSamples(file, info);
    } catch (err) {
      if (err instanceof WavFormatError) throw new HttpError(415, `"${file.originalName}" is not a WAV file we can read: ${err.message}`, `wav_${err.code}`);
      throw err;
    }
    const m = meta[i]!;
    if (m.drivenChannel !== null && m.drivenChannel >= info.channels) {
      throw badRequest(`"${file.originalName}": driven channel ${m.drivenChannel + 1} does not exist in a ${info.channels}-channel file`);
    }
    checked.push({ file, meta: m, info });
  }

  const tpIds = [...new Set(meta.map((m) => m.testPointId).filter((v): v is number => v !== null))];
  const foundTp = tpIds.length
    ? await db
        .select({ id: testPoints.id })
        .from(testPoints)
        .where(and(eq(testPoints.shopId, shopId), eq(testPoints.jobId, jobId), inArray(testPoints.id, tpIds)))
    : [];
  const calIds = [...new Set(meta.map((m) => m.calibrationId).filter((v): v is number => v !== null))];
  const foundCal = calIds.length
    ? await db
        .select({ id: calibrationProfiles.id })
        .from(calibrationProfiles)
        .where(and(eq(calibrationProfiles.shopId, shopId), inArray(calibrationProfiles.id, calIds)))
    : [];
  const inputs = await jobUnitInputs(db, shopId, jobId);
  const tpOk = new Set(foundTp.map((r) => r.id));
  const calOk = new Set(foundCal.map((r) => r.id));
  for (const c of checked) {
    if (c.meta.testPointId !== null && !tpOk.has(c.meta.testPointId)) {
      throw badRequest(`"${c.file.originalName}": test point ${c.meta.testPointId} is not on this job`);
    }
    if (c.meta.calibrationId !== null && !calOk.has(c.meta.calibrationId)) {
      throw badRequest(`"${c.file.originalName}": calibration profile ${c.meta.calibrationId} does not exist in this shop`);
    }
    c.meta = { ...c.meta, ...resolveCaptureInputs(inputs, c.meta, `"${c.file.originalName}": `) };
  }
  return checked;
}

/** The source inputs of the job's unit, for tagging captures. */
export async function jobUnitInputs(db: DbOrTx, shopId: number, jobId: number): Promise<string[]> {
  const [row] = await db
    .select({ kind: units.kind, inputs: units.inputs })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!row) throw notFound('Job');
  return unitInputs(row.kind, row.inputs);
}

/**
 * Selected and driven inputs in the unit's own spelling; a name the unit does not have is refused
 * with the list it does have, so a typo is not stored as a new input.
 */
export function resolveCaptureInputs(
  inputs: string[],
  tags: { selectedInput: string | null; drivenInput: string | null },
  where = '',
): { selectedInput: string | null; drivenInput: string | null } {
  const resolve = (name: string | null, role: string) => {
    if (name === null) return null;
    const found = matchInput(inputs, name);
    if (!found) throw badRequest(`${where}the ${role} input "${name}" is not one of this unit's inputs (${inputs.join(', ')})`);
    return found;
  };
  return { selectedInput: resolve(tags.selectedInput, 'selected'), drivenInput: resolve(tags.drivenInput, 'driven') };
}

/**
 * Stores checked files content-addressed and inserts their capture rows and analysis jobs in one
 * transaction. If anything fails, the rows and jobs roll back and files this call added to
 * storage are removed again (unless another capture has meanwhile stored the same content).
 */
export async function storeCaptures(
  db: DbOrTx,
  queue: AnalysisQueue,
  store: FileStore,
  ctx: { shopId: number; jobId: number; userId: number },
  checked: CheckedFile[],
): Promise<number[]> {
  const created: string[] = [];
  try {
    return await db.transaction(async (tx) => {
      const ids: number[] = [];
      // In one sorted order, so two uploads sharing files cannot deadlock.
      for (const sha of [...new Set(checked.map((c) => c.file.sha256))].sort()) await lockContent(tx, sha);
      for (const { file, meta, info } of checked) {
        const stored = await storeContentAddressed(store, file.tempPath, file.sha256);
        if (stored.created) created.push(file.sha256);
        const [row] = await tx
          .insert(captures)
          .values({
            shopId: ctx.shopId,
            jobId: ctx.jobId,
            testPointId: meta.testPointId,
            phase: meta.phase,
            stimulus: meta.stimulus,
            drivenChannel: meta.drivenChannel,
            selectedInput: meta.selectedInput,
            drivenInput: meta.drivenInput,
            calibrationId: meta.calibrationId,
            loadOhms: meta.loadOhms,
            notes: meta.notes,
            originalName: file.originalName.slice(0, 255),
            sha256: file.sha256,
            sizeBytes: file.size,
            sampleRate: info.sampleRate,
            channels: info.channels,
            bitsPerSample: info.bitsPerSample,
            durationS: info.durationS,
            uploadedBy: ctx.userId,
          })
          .returning({ id: captures.id });
        ids.push(row!.id);
      }
      await queue.enqueue(ids, tx);
      return ids;
    });
  } catch (err) {
    await removeUnreferenced(db, store, created);
    throw err;
  }
}

/** After a transaction that stored files was rolled back: drops those no capture refers to. */
export async function removeStoredIfUnreferenced(db: Db, store: FileStore, sha256s: string[]): Promise<void> {
  await removeUnreferenced(db, store, sha256s);
}

/**
 * Stored files are shared by every capture with the same content. Whoever adds or removes a
 * file holds this lock until its transaction ends, so a delete never unlinks a file that a
 * concurrent upload is about to reference.
 */
async function lockContent(tx: DbOrTx, sha256: string): Promise<void> {
  await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${sha256}))`);
}

async function removeUnreferenced(db: DbOrTx, store: FileStore, sha256s: string[]): Promise<void> {
  for (const sha256 of sha256s) {
    await db.transaction(async (tx) => {
      await lockContent(tx, sha256);
      const [ref] = await tx.select({ id: captures.id }).from(captures).where(eq(captures.sha256, sha256)).limit(1);
      if (!ref) await store.remove(captureKey(sha256));
    });
  }
}

const summaryColumns = {
  id: captures.id,
  jobId: captures.jobId,
  testPointId: captures.testPointId,
  testPointName: testPoints.name,
  testPointPosition: testPoints.position,
  phase: captures.phase,
  stimulus: captures.stimulus,
  drivenChannel: captures.drivenChannel,
  selectedInput: captures.selectedInput,
  drivenInput: captures.drivenInput,
  calibrationId: captures.calibrationId,
  calibrationName: calibrationProfiles.name,
  loadOhms: captures.loadOhms,
  originalName: captures.originalName,
  sha256: captures.sha256,
  sizeBytes: captures.sizeBytes,
  sampleRate: captures.sampleRate,
  channels: captures.channels,
  bitsPerSample: captures.bitsPerSample,
  durationS: captures.durationS,
  state: captures.state,
  error: captures.error,
  notes: captures.notes,
  uploadedByName: users.name,
  createdAt: captures.createdAt,
  engineVersion: analyses.engineVersion,
  figures: analyses.figures,
};

function summaryQuery(db: DbOrTx) {
  return db
    .select(summaryColumns)
    .from(captures)
    .leftJoin(testPoints, eq(testPoints.id, captures.testPointId))
    .leftJoin(calibrationProfiles, eq(calibrationProfiles.id, captures.calibrationId))
    .leftJoin(users, eq(users.id, captures.uploadedBy))
    .leftJoin(analyses, eq(analyses.captureId, captures.id));
}

type SummaryRow = Awaited<ReturnType<ReturnType<typeof summaryQuery>['execute']>>[number];

function toSummary(r: SummaryRow): CaptureSummary {
  const stored = r.state === 'done' ? (r.figures as CaptureFigures | null) : null;
  // Power follows the load on the capture row, so the figure and its load can never disagree.
  const figures = stored ? { ...stored, loadOhms: r.loadOhms, powerW: powerFromDbv(stored.levelDbv, r.loadOhms) } : null;
  return { ...r, createdAt: r.createdAt.toISOString(), engineVersion: r.state === 'done' ? r.engineVersion : null, figures };
}

export async function listCaptures(db: DbOrTx, shopId: number, jobId: number): Promise<CaptureSummary[]> {
  const rows = await summaryQuery(db)
    .where(and(eq(captures.shopId, shopId), eq(captures.jobId, jobId)))
    .orderBy(desc(captures.createdAt), desc(captures.id));
  return rows.map(toSummary);
}

export async function getCaptures(db: DbOrTx, shopId: number, ids: number[]): Promise<CaptureSummary[]> {
  if (ids.length === 0) return [];
  const rows = await summaryQuery(db).where(and(eq(captures.shopId, shopId), inArray(captures.id, ids)));
  const byId = new Map(rows.map((r) => [r.id, toSummary(r)]));
  return ids.map((id) => byId.get(id)).filter((c): c is CaptureSummary => c !== undefined);
}

export async function getCapture(db: DbOrTx, shopId: number, id: number): Promise<CaptureSummary> {
  const [c] = await getCaptures(db, shopId, [id]);
  if (!c) throw notFound('Capture');
  return c;
}

/**
 * The engine's full result (spectrum, waveform, per channel) for the charts, as the JSON text
 * PostgreSQL holds: about 100 kB that would otherwise be parsed here only to be written out again.
 */
export async function getAnalysisResultJson(db: DbOrTx, shopId: number, captureId: number): Promise<string> {
  const [row] = await db
    .select({ result: sql<string | null>`${analyses.result}::text`, state: captures.state })
    .from(captures)
    .leftJoin(analyses, eq(analyses.captureId, captures.id))
    .where(and(eq(captures.shopId, shopId), eq(captures.id, captureId)));
  if (!row) throw notFound('Capture');
  if (row.state !== 'done' || row.result === null) throw new HttpError(409, 'This capture has not been measured yet', 'not_ready');
  return row.result;
}

/** Which stored file a capture is, for download: read it with readCapture. */
export async function captureFile(db: DbOrTx, shopId: number, id: number): Promise<{ sha256: string; name: string; sizeBytes: number }> {
  const [row] = await db
    .select({ sha256: captures.sha256, name: captures.originalName, sizeBytes: captures.sizeBytes })
    .from(captures)
    .where(and(eq(captures.shopId, shopId), eq(captures.id, id)));
  if (!row) throw notFound('Capture');
  return row;
}

/** Measures a capture again (after a failure or an engine update); the job commits with the state. */
export async function requeueCapture(db: Db, queue: AnalysisQueue, shopId: number, id: number): Promise<void> {
  await db.transaction(async (tx) => {
    const [row] = await tx
      .select({ state: captures.state })
      .from(captures)
      .where(and(eq(captures.shopId, shopId), eq(captures.id, id)))
      .for('update');
    if (!row) throw notFound('Capture');
    if (row.state === 'queued' || row.state === 'running') throw new HttpError(409, 'This capture is already being measured', 'conflict');
    await tx.update(captures).set({ state: 'queued', error: null }).where(eq(captures.id, id));
    await queue.enqueue([id], tx);
  });
}

/** Deletes a capture and its analysis; the file goes too unless another capture has the same content. */
export async function deleteCapture(db: Db, store: FileStore, shopId: number, id: number): Promise<void> {
  const sha256 = await db.transaction(async (tx) => {
    const [row] = await tx
      .delete(captures)
      .where(and(eq(captures.shopId, shopId), eq(captures.id, id)))
      .returning({ sha256: captures.sha256 });
    if (!row) throw notFound('Capture');
    return row.sha256;
  });
  await removeUnreferenced(db, store, [sha256]);
}
