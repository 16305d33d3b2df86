import { Router, type Response } from 'express';
import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Db } from '../db/client';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam } from '../middleware/validate';
import { HttpError } from '../http-error';
import { readCapture, storedCaptureSize } from '../services/capture-storage';
import { captureFile } from '../services/captures';
import type { FileStore } from '../storage/file-store';

// Playback of a stored capture: the browser's audio element asks for byte ranges (RFC 9110 §14)
// as it plays and seeks, so a long capture starts at once instead of after a full download.
// The bytes come from the file store (local folder or S3) through capture-storage.ts.

const missing = () => new HttpError(404, 'The stored file is missing', 'not_found');

/** Streams to the client; a player that hangs up mid-range (it seeks all the time) is no error. */
async function send(open: Promise<Readable>, res: Response): Promise<void> {
  let body: Readable;
  try {
    body = await open;
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') throw missing();
    throw err;
  }
  try {
    await pipeline(body, res);
  } catch (err) {
    if (res.destroyed || (err as NodeJS.ErrnoException).code === 'ERR_STREAM_PREMATURE_CLOSE') return;
    throw err;
  }
}

export function captureAudioRoutes(db: Db, store: FileStore): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');

  r.get('/captures/:id/audio', staff, async (req, res) => {
    const { sha256 } = await captureFile(db, currentUser(req).shop.id, idParam(req.params.id, 'Capture'));
    const size = await storedCaptureSize(store, sha256);
    if (size === null) throw missing();
    res.setHeader('Accept-Ranges', 'bytes');
    res.type('audio/wav');
    const ranges = req.headers.range ? req.range(size) : undefined;
    if (ranges === -1) {
      res.setHeader('Content-Range', `bytes */${size}`);
      throw new HttpError(416, `The range asked for lies outside the ${size}-byte file`, 'range');
    }
    // A malformed header, or several ranges at once, is answered with the whole file (RFC 9110 §14.2).
    if (ranges === undefined || ranges === -2 || ranges.type !== 'bytes' || ranges.length !== 1) {
      res.setHeader('Content-Length', String(size));
      await send(readCapture(store, sha256), res);
      return;
    }
    const { start, end } = ranges[0]!;
    res.status(206);
    res.setHeader('Content-Range', `bytes ${start}-${end}/${size}`);
    res.setHeader('Content-Length', String(end - start + 1));
    await send(readCapture(store, sha256, { start, end }), res);
  });
  return r;
}
