import { createHash, randomBytes } from 'node:crypto';
import { mkdir, open } from 'node:fs/promises';
import { join } from 'node:path';
import { and, desc, eq, sql } from 'drizzle-orm';
import { encodeWavHeader, type SampleFormat } from '../../analysis/index';
import type { SessionUser } from '../../shared/auth';
import {
  recordingBytesPerSample,
  recordingSeconds,
  type ChunkReceipt,
  type RecordingFormat,
  type RecordingListQuery,
  type RecordingOpen,
  type RecordingSummary,
} from '../../shared/recordings';
import type { Db, DbOrTx } from '../db/client';
import { calibrationProfiles, jobs, recordings, testPoints, units, users } from '../db/schema/index';
import { HttpError, badRequest, conflict, notFound } from '../http-error';
import type { AnalysisQueue } from './analysis-queue';
import { HEAD_BYTES, removeQuietly } from './capture-storage';
import { checkUpload, jobUnitInputs, removeStoredIfUnreferenced, resolveCaptureInputs, storeCaptures, type StagedFile } from './captures';
import { jobInShop } from './job-access';
import type { FileStore } from '../storage/file-store';

// Live-bench recordings: chunks arrive numbered and are kept one file each in the store under
// recordings/<id>/<seq>.pcm until the recording is finished into a capture. Chunks of one
// recording may arrive at different nodes: the row (and its lock) in PostgreSQL is the only
// bookkeeping, and the chunks are in the shared store.
// Every change to a recording holds its row lock, so chunks, finish and discard never interleave.
// A chunk is stored whole before the row counts it, so a counted chunk always exists; a chunk
// left by a crash before the count is simply written again by the retry.

const recordingPrefix = (id: number) => `recordings/${id}`;
const chunkKey = (id: number, seq: number) => `${recordingPrefix(id)}/${seq}.pcm`;
/** Where a local store rooted at filesDir keeps a recording's chunks. */
export const recordingDir = (filesDir: string, id: number) => join(filesDir, 'recordings', String(id));

const wavFormat = (f: RecordingFormat): SampleFormat => (f === 'pcm16' ? 16 : f === 'pcm24' ? 24 : 'float32');

const summaryColumns = {
  id: recordings.id,
  jobId: recordings.jobId,
  jobTitle: sql<string>`${units.maker} || ' ' || ${units.model}`,
  testPointId: recordings.testPointId,
  testPointName: testPoints.name,
  phase: recordings.phase,
  stimulus: recordings.stimulus,
  drivenChannel: recordings.drivenChannel,
  selectedInput: recordings.selectedInput,
  drivenInput: recordings.drivenInput,
  calibrationId: recordings.calibrationId,
  loadOhms: recordings.loadOhms,
  sampleRate: recordings.sampleRate,
  channels: recordings.channels,
  format: recordings.format,
  plannedSeconds: recordings.plannedSeconds,
  notes: recordings.notes,
  chunkCount: recordings.chunkCount,
  bytesReceived: recordings.bytesReceived,
  state: recordings.state,
  captureId: recordings.captureId,
  createdByName: users.name,
  createdAt: recordings.createdAt,
  updatedAt: recordings.updatedAt,
};

function summaryQuery(db: DbOrTx) {
  return db
    .select(summaryColumns)
    .from(recordings)
    .innerJoin(jobs, eq(jobs.id, recordings.jobId))
    .innerJoin(units, eq(units.id, jobs.unitId))
    .leftJoin(testPoints, eq(testPoints.id, recordings.testPointId))
    .leftJoin(users, eq(users.id, recordings.createdBy));
}
type SummaryRow = Awaited<ReturnType<ReturnType<typeof summaryQuery>['execute']>>[number];

function toSummary(r: SummaryRow): RecordingSummary {
  return {
    ...r,
    durationS: recordingSeconds(r.bytesReceived, r),
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  };
}

export async function getRecording(db: DbOrTx, shopId: number, id: number): Promise<RecordingSummary> {
  const [row] = await summaryQuery(db).where(and(eq(recordings.shopId, shopId), eq(recordings.id, id)));
  if (!row) throw notFound('Recording');
  return toSummary(row);
}

export async function listRecordings(db: DbOrTx, shopId: number, q: RecordingListQuery): Promise<RecordingSummary[]> {
  const rows = await summaryQuery(db)
    .where(and(eq(recordings.shopId, shopId), eq(recordings.state, q.state), q.jobId ? eq(recordings.jobId, q.jobId) : undefined))
    .orderBy(desc(recordings.createdAt), desc(recordings.id))
    .limit(200);
  return rows.map(toSummary);
}

/** Opens a recording on a job of this shop; its test point must be on that job. */
export async function openRecording(db: Db, user: SessionUser, input: RecordingOpen): Promise<RecordingSummary> {
  const shopId = user.shop.id;
  await jobInShop(db, shopId, input.jobId);
  if (input.testPointId !== null) {
    const [tp] = await db
      .select({ id: testPoints.id })
      .from(testPoints)
      .where(and(eq(testPoints.shopId, shopId), eq(testPoints.jobId, input.jobId), eq(testPoints.id, input.testPointId)));
    if (!tp) throw badRequest(`Test point ${input.testPointId} is not on this job`);
  }
  if (input.calibrationId !== null) {
    const [cal] = await db
      .select({ id: calibrationProfiles.id })
      .from(calibrationProfiles)
      .where(and(eq(calibrationProfiles.shopId, shopId), eq(calibrationProfiles.id, input.calibrationId)));
    if (!cal) throw badRequest(`Calibration profile ${input.calibrationId} does not exist in this shop`);
  }
  const tags = resolveCaptureInputs(await jobUnitInputs(db, shopId, input.jobId), input);
  const [row] = await db
    .insert(recordings)
    .values({ ...input, ...tags, shopId, createdBy: user.id })
    .returning({ id: recordings.id });
  return getRecording(db, shopId, row!.id);
}

type RecordingRow = typeof recordings.$inferSelect;

async function lockRecording(tx: DbOrTx, shopId: number, id: number): Promise<RecordingRow> {
  const [row] = await tx
    .select()
    .from(recordings)
    .where(and(eq(recordings.shopId, shopId), eq(recordings.id, id)))
    .for('update');
  if (!row) throw notFound('Recording');
  return row;
}

/** Float samples must be numbers: a NaN or infinity would poison every figure of the analysis. */
function checkFloats(body: Uint8Array): void {
  const view = new DataView(body.buffer, body.byteOffset, body.byteLength);
  for (let at = 0; at < body.byteLength; at += 4) {
    if (!Number.isFinite(view.getFloat32(at, true))) throw badRequest(`Sample at byte ${at} is not a finite number`);
  }
}

function receipt(row: RecordingRow, seq: number, repeated: boolean): ChunkReceipt {
  return {
    seq,
    repeated,
    chunkCount: row.chunkCount,
    bytesReceived: row.bytesReceived,
    durationS: recordingSeconds(row.bytesReceived, row),
  };
}

/**
 * Stores chunk `seq`. The next chunk is accepted; a repeat of a stored chunk with the same bytes
 * answers as before (a client retrying after a lost answer); anything else is refused with the
 * number expected, so the client can resume from there.
 */
export async function putChunk(
  db: Db,
  store: FileStore,
  shopId: number,
  id: number,
  seq: number,
  body: Uint8Array,
  maxDataBytes: number,
): Promise<ChunkReceipt> {
  return db.transaction(async (tx) => {
    const rec = await lockRecording(tx, shopId, id);
    if (rec.state !== 'open') throw conflict('This recording is already saved as a capture; start a new one');
    const frameBytes = rec.channels * recordingBytesPerSample(rec.format);
    if (body.byteLength === 0) throw badRequest('The chunk is empty');
    if (body.byteLength % frameBytes !== 0) {
      throw badRequest(`A chunk must hold whole frames: a multiple of ${frameBytes} bytes for ${rec.channels} channel(s) of ${rec.format}`);
    }
    if (seq < rec.chunkCount) {
      const stored = await store.readBytes(chunkKey(id, seq));
      if (stored && Buffer.compare(stored, body) === 0) return receipt(rec, seq, true);
      throw new HttpError(409, `Chunk ${seq} already arrived with different content`, 'chunk_mismatch', { expected: rec.chunkCount });
    }
    if (seq > rec.chunkCount) {
      throw new HttpError(409, `Chunk ${seq} is ahead of the recording: send chunk ${rec.chunkCount} next`, 'chunk_order', { expected: rec.chunkCount });
    }
    if (rec.bytesReceived + body.byteLength > maxDataBytes) {
      throw new HttpError(413, `The recording would pass the ${Math.round(maxDataBytes / 1e6)} MB limit for one capture; finish it and start another`, 'too_large');
    }
    if (rec.format === 'float32') checkFloats(body);
    await store.putBytes(chunkKey(id, seq), body);
    const [row] = await tx
      .update(recordings)
      .set({ chunkCount: seq + 1, bytesReceived: rec.bytesReceived + body.byteLength, updatedAt: new Date() })
      .where(eq(recordings.id, id))
      .returning();
    return receipt(row!, seq, false);
  });
}

/** Writes header + chunks 0…n−1 into a temp file in this node's scratch folder, hashing as it goes. */
async function assembleWav(store: FileStore, rec: RecordingRow): Promise<StagedFile> {
  const frameBytes = rec.channels * recordingBytesPerSample(rec.format);
  const frames = rec.bytesReceived / frameBytes;
  const header = encodeWavHeader({ sampleRate: rec.sampleRate, channels: rec.channels, format: wavFormat(rec.format), frames });
  const dir = store.scratchDir;
  await mkdir(dir, { recursive: true });
  const tempPath = join(dir, `recording-${rec.id}-${randomBytes(8).toString('hex')}.part`);
  const hash = createHash('sha256');
  const head: Uint8Array[] = [];
  let headLength = 0;
  let size = 0;
  const handle = await open(tempPath, 'wx');
  try {
    const put = async (bytes: Uint8Array) => {
      hash.update(bytes);
      if (headLength < HEAD_BYTES) {
        const part = bytes.subarray(0, HEAD_BYTES - headLength);
        head.push(part);
        headLength += part.length;
      }
      size += bytes.byteLength;
      await handle.write(bytes);
    };
    await put(header);
    let data = 0;
    for (let seq = 0; seq < rec.chunkCount; seq++) {
      const chunk = await store.readBytes(chunkKey(rec.id, seq));
      if (!chunk) throw new Error(`recording ${rec.id}: chunk ${seq} is missing from storage`);
      data += chunk.byteLength;
      await put(chunk);
    }
    if (data !== rec.bytesReceived) throw new Error(`recording ${rec.id}: chunks hold ${data} bytes, the record says ${rec.bytesReceived}`);
    if (data & 1) await put(new Uint8Array(1)); // RIFF chunks are padded to an even length
  } catch (err) {
    await handle.close();
    await removeQuietly(tempPath);
    throw err;
  }
  await handle.close();
  return { originalName: `live-recording-${rec.id}.wav`, tempPath, size, sha256: hash.digest('hex'), head: Buffer.concat(head) };
}

export interface FinishOutcome {
  captureId: number;
  /** False when the recording had already been finished (a repeated request). */
  created: boolean;
}

/**
 * Turns an open recording into a capture: the WAV file goes into capture storage and the capture
 * row and its analysis job commit together (storeCaptures). The recording's row lock is held
 * throughout, so a second finish waits and then answers with the same capture.
 */
export async function finishRecording(db: Db, queue: AnalysisQueue, store: FileStore, user: SessionUser, id: number): Promise<FinishOutcome> {
  const shopId = user.shop.id;
  // One transaction for the capture, its queued analysis and the recording's new state: a crash
  // or error part-way leaves the recording open and no capture, so finishing again makes one.
  let storedSha: string | null = null;
  let outcome: FinishOutcome;
  try {
    outcome = await db.transaction(async (tx) => {
      const rec = await lockRecording(tx, shopId, id);
      if (rec.state === 'finished') {
        if (rec.captureId === null) throw conflict('This recording was saved as a capture that has since been deleted');
        return { captureId: rec.captureId, created: false };
      }
      if (rec.chunkCount === 0) throw badRequest('Nothing has been recorded yet');
      const staged = await assembleWav(store, rec);
      try {
        const meta = {
          testPointId: rec.testPointId,
          phase: rec.phase,
          stimulus: rec.stimulus,
          drivenChannel: rec.drivenChannel,
          selectedInput: rec.selectedInput,
          drivenInput: rec.drivenInput,
          calibrationId: rec.calibrationId,
          loadOhms: rec.loadOhms,
          notes: rec.notes,
        };
        const checked = await checkUpload(tx, shopId, rec.jobId, [staged], [meta]);
        const [captureId] = await storeCaptures(tx, queue, store, { shopId, jobId: rec.jobId, userId: user.id }, checked);
        storedSha = checked[0]!.file.sha256;
        await tx.update(recordings).set({ state: 'finished', captureId: captureId!, updatedAt: new Date() }).where(eq(recordings.id, id));
        return { captureId: captureId!, created: true };
      } finally {
        await removeQuietly(staged.tempPath);
      }
    });
  } catch (err) {
    // Rolled back after the file was stored: no capture refers to it now (unless another does).
    if (storedSha) await removeStoredIfUnreferenced(db, store, [storedSha]);
    throw err;
  }
  if (outcome.created) await store.removeFolder(recordingPrefix(id));
  return outcome;
}

/** Drops an open recording and its chunks. A finished one is a capture now: delete that instead. */
export async function discardRecording(db: Db, store: FileStore, shopId: number, id: number): Promise<void> {
  await db.transaction(async (tx) => {
    const rec = await lockRecording(tx, shopId, id);
    if (rec.state === 'finished') throw conflict('This recording is already saved as a capture; delete the capture instead');
    await tx.delete(recordings).where(eq(recordings.id, id));
  });
  await store.removeFolder(recordingPrefix(id));
}
