import { Router, type Response } from 'express';
import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Config } from '../config';
import type { Db } from '../db/client';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam } from '../middleware/validate';
import { HttpError } from '../http-error';
import { openStoredCapture } from '../services/capture-storage';
import { storedCaptureHash } from '../services/captures';

// Playback of a stored capture: the browser's audio element asks for byte ranges (RFC 9110 §14)
// as it plays and seeks, so a long capture starts at once instead of after a full download.

/** Streams to the client; a player that hangs up mid-range (it seeks all the time) is no error. */
async function send(body: Readable, res: Response): Promise<void> {
  try {
    await pipeline(body, res);
  } catch (err) {
    if (res.destroyed || (err as NodeJS.ErrnoException).code === 'ERR_STREAM_PREMATURE_CLOSE') return;
    throw err;
  }
}

export function captureAudioRoutes(db: Db, config: Config): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');

  r.get('/captures/:id/audio', staff, async (req, res) => {
    const { sha256 } = await storedCaptureHash(db, currentUser(req).shop.id, idParam(req.params.id, 'Capture'));
    const stored = await openStoredCapture(config.FILES_DIR, sha256);
    if (!stored) throw new HttpError(404, 'The stored file is missing', 'not_found');
    res.setHeader('Accept-Ranges', 'bytes');
    res.type('audio/wav');
    const ranges = req.headers.range ? req.range(stored.size) : undefined;
    if (ranges === -1) {
      res.setHeader('Content-Range', `bytes */${stored.size}`);
      throw new HttpError(416, `The range asked for lies outside the ${stored.size}-byte file`, 'range');
    }
    // A malformed header, or several ranges at once, is answered with the whole file (RFC 9110 §14.2).
    if (ranges === undefined || ranges === -2 || ranges.type !== 'bytes' || ranges.length !== 1) {
      res.setHeader('Content-Length', String(stored.size));
      await send(stored.read(), res);
      return;
    }
    const { start, end } = ranges[0]!;
    res.status(206);
    res.setHeader('Content-Range', `bytes ${start}-${end}/${stored.size}`);
    res.setHeader('Content-Length', String(end - start + 1));
    await send(stored.read({ start, end }), res);
  });
  return r;
}
