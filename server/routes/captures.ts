import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { Router, type RequestHandler } from 'express';
import multer from 'multer';
import type { Config } from '../config';
import type { Db } from '../db/client';
import { captureUploadMetaSchema, formatBytes, MAX_FILES_PER_UPLOAD, type CaptureFileMeta } from '../../shared/captures';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam } from '../middleware/validate';
import { HttpError, badRequest } from '../http-error';
import type { AnalysisQueue } from '../services/analysis-queue';
import { hashingStorage, readCapture, removeQuietly } from '../services/capture-storage';
import type { FileStore } from '../storage/file-store';
import { jobForViewer } from '../services/job-access';
import * as svc from '../services/captures';

type Req = Parameters<RequestHandler>[0];

function multerProblem(err: multer.MulterError, maxBytes: number): HttpError {
  const name = (err as multer.MulterError & { filename?: string }).filename;
  switch (err.code) {
    case 'LIMIT_FILE_SIZE':
      return new HttpError(413, `${name ? `"${name}"` : 'A file'} is larger than the ${formatBytes(maxBytes)} limit for one capture`, 'too_large');
    case 'LIMIT_FILE_COUNT':
      return badRequest(`At most ${MAX_FILES_PER_UPLOAD} files per upload`);
    case 'LIMIT_UNEXPECTED_FILE':
      return badRequest('Send the WAV files in the "files" field');
    default:
      return badRequest(`The upload could not be read: ${err.message}`);
  }
}

/** Per-file details from the "metadata" field; a problem names the file it belongs to. */
function parseMetadata(raw: unknown, files: Express.Multer.File[]): CaptureFileMeta[] {
  if (typeof raw !== 'string' || raw.trim() === '') throw badRequest('Missing the "metadata" field: a JSON list with the details of each file');
  let json: unknown;
  try {
    json = JSON.parse(raw);
  } catch {
    throw badRequest('The "metadata" field is not valid JSON');
  }
  const parsed = captureUploadMetaSchema.safeParse(json);
  if (parsed.success) return parsed.data;
  const issue = parsed.error.issues[0]!;
  const [index, ...field] = issue.path;
  const file = typeof index === 'number' ? files[index]?.originalname : undefined;
  const where = file ? `"${file}": ${field.join('.')}` : issue.path.join('.');
  throw new HttpError(400, `${where ? `${where}: ` : ''}${issue.message}`, 'validation', parsed.error.issues);
}

export function captureRoutes(db: Db, config: Config, queue: AnalysisQueue, store: FileStore): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');
  const bench = requireRole('owner', 'technician');
  const shopOf = (req: Req) => currentUser(req).shop.id;
  const maxBytes = Math.round(config.UPLOAD_MAX_MB * 1e6);
  const receive = multer({
    storage: hashingStorage(store.scratchDir),
    limits: { fileSize: maxBytes, files: MAX_FILES_PER_UPLOAD, fields: 8, fieldSize: 256 * 1024, parts: MAX_FILES_PER_UPLOAD + 8 },
  }).array('files', MAX_FILES_PER_UPLOAD);
  const upload: RequestHandler = (req, res, next) =>
    receive(req, res, (err: unknown) => next(err instanceof multer.MulterError ? multerProblem(err, maxBytes) : err));
  // Before any byte is stored: the job must be this shop's.
  const jobFirst: RequestHandler = async (req, _res, next) => {
    await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    next();
  };

  r.post('/jobs/:id/captures', bench, jobFirst, upload, async (req, res) => {
    const files = (req.files as Express.Multer.File[] | undefined) ?? [];
    try {
      const user = currentUser(req);
      const jobId = idParam(req.params.id, 'Job');
      const meta = files.length ? parseMetadata((req.body as Record<string, unknown>).metadata, files) : [];
      const staged = files.map((f) => ({ originalName: f.originalname, tempPath: f.path, size: f.size, sha256: f.sha256!, head: f.head! }));
      const checked = await svc.checkUpload(db, user.shop.id, jobId, staged, meta);
      const ids = await svc.storeCaptures(db, queue, store, { shopId: user.shop.id, jobId, userId: user.id }, checked);
      queue.wake();
      res.status(201).json({ captures: await svc.getCaptures(db, user.shop.id, ids) });
    } finally {
      // Stored files were renamed away; whatever is left in the temp folder goes.
      await Promise.all(files.map((f) => removeQuietly(f.path)));
    }
  });

  r.get('/jobs/:id/captures', staff, async (req, res) => {
    const job = await jobForViewer(db, currentUser(req), idParam(req.params.id, 'Job'));
    res.json(await svc.listCaptures(db, job.shopId, job.id));
  });
  r.get('/captures/:id', staff, async (req, res) => {
    res.json(await svc.getCapture(db, shopOf(req), idParam(req.params.id, 'Capture')));
  });
  r.get('/captures/:id/result', staff, async (req, res) => {
    res.type('json').send(await svc.getAnalysisResultJson(db, shopOf(req), idParam(req.params.id, 'Capture')));
  });
  r.get('/captures/:id/file', staff, async (req, res) => {
    const file = await svc.captureFile(db, shopOf(req), idParam(req.params.id, 'Capture'));
    let body: Readable;
    try {
      body = await readCapture(store, file.sha256);
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === 'ENOENT') throw new HttpError(404, 'The stored file is missing', 'not_found');
      throw err;
    }
    res.attachment(file.name);
    res.type('audio/wav');
    res.setHeader('Content-Length', String(file.sizeBytes));
    // A client that goes away ends the read; the stored file is untouched either way.
    await pipeline(body, res).catch(() => undefined);
  });
  r.post('/captures/:id/analyse', bench, async (req, res) => {
    const id = idParam(req.params.id, 'Capture');
    await svc.requeueCapture(db, queue, shopOf(req), id);
    queue.wake();
    res.status(202).json(await svc.getCapture(db, shopOf(req), id));
  });
  r.delete('/captures/:id', bench, async (req, res) => {
    await svc.deleteCapture(db, store, shopOf(req), idParam(req.params.id, 'Capture'));
    res.status(204).end();
  });
  return r;
}
