import express, { Router, type RequestHandler } from 'express';
import type { Config } from '../config';
import type { Db } from '../db/client';
import { chunkSeqSchema, MAX_CHUNK_BYTES, recordingListQuerySchema, recordingOpenSchema } from '../../shared/recordings';
import { renderSignalWav, signalFileName, signalRequestSchema } from '../../shared/signals';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import { HttpError } from '../http-error';
import type { AnalysisQueue } from '../services/analysis-queue';
import { getCapture } from '../services/captures';
import * as svc from '../services/recordings';
import type { FileStore } from '../storage/file-store';

type Req = Parameters<RequestHandler>[0];

/** Raw PCM bodies for chunks; a body over the limit is refused before it is read into memory. */
const rawChunk = express.raw({ type: 'application/octet-stream', limit: MAX_CHUNK_BYTES });
const receiveChunk: RequestHandler = (req, res, next) =>
  rawChunk(req, res, (err?: unknown) => {
    if ((err as { type?: string } | undefined)?.type === 'entity.too.large') {
      next(new HttpError(413, `A chunk may hold at most ${MAX_CHUNK_BYTES / 1024 / 1024} MB; send smaller chunks`, 'too_large'));
    } else next(err);
  });

/** Live-bench recordings streamed in chunks and finished into captures: bench work. */
export function recordingRoutes(db: Db, config: Config, queue: AnalysisQueue, store: FileStore): Router {
  const r = Router();
  const bench = requireRole('owner', 'technician');
  const shopOf = (req: Req) => currentUser(req).shop.id;
  const recordingId = (req: Req) => idParam(req.params.id, 'Recording');
  const maxDataBytes = Math.round(config.UPLOAD_MAX_MB * 1e6) - 128; // room for the WAV header

  r.get('/recordings', bench, async (req, res) => {
    res.json(await svc.listRecordings(db, shopOf(req), parse(recordingListQuerySchema, req.query)));
  });
  r.post('/recordings', bench, async (req, res) => {
    res.status(201).json(await svc.openRecording(db, currentUser(req), parse(recordingOpenSchema, req.body)));
  });
  r.get('/recordings/:id', bench, async (req, res) => {
    res.json(await svc.getRecording(db, shopOf(req), recordingId(req)));
  });
  r.put('/recordings/:id/chunks/:seq', bench, receiveChunk, async (req, res) => {
    const id = recordingId(req);
    if (!Buffer.isBuffer(req.body)) {
      await svc.getRecording(db, shopOf(req), id); // another shop's id stays a 404
      throw new HttpError(415, 'Send the chunk as raw samples with Content-Type: application/octet-stream', 'unsupported_media_type');
    }
    const seq = parse(chunkSeqSchema, req.params.seq);
    res.json(await svc.putChunk(db, store, shopOf(req), id, seq, req.body, maxDataBytes));
  });
  r.post('/recordings/:id/finish', bench, async (req, res) => {
    const user = currentUser(req);
    const id = recordingId(req);
    const outcome = await svc.finishRecording(db, queue, store, user, id);
    if (outcome.created) queue.wake();
    res.status(outcome.created ? 201 : 200).json({
      recording: await svc.getRecording(db, user.shop.id, id),
      capture: await getCapture(db, user.shop.id, outcome.captureId),
    });
  });
  r.delete('/recordings/:id', bench, async (req, res) => {
    await svc.discardRecording(db, store, shopOf(req), recordingId(req));
    res.status(204).end();
  });
  return r;
}

/** Stimulus WAV files, the same bytes the Test signals page makes in the browser. */
export function signalRoutes(): Router {
  const r = Router();
  r.get('/signals', requireRole('owner', 'technician'), (req, res) => {
    const request = parse(signalRequestSchema, req.query);
    const wav = renderSignalWav(request);
    res.attachment(signalFileName(request));
    res.type('audio/wav');
    res.send(Buffer.from(wav.buffer, wav.byteOffset, wav.byteLength));
  });
  return r;
}
