import type { ErrorRequestHandler, RequestHandler } from 'express';
import { HttpError } from '../http-error';

interface PgLikeError {
  code?: string;
  detail?: string;
  constraint?: string;
}

function fromDatabase(err: PgLikeError): HttpError | null {
  switch (err.code) {
    case '23505':
      return new HttpError(409, 'That record already exists', 'conflict', err.constraint);
    case '23503':
      return new HttpError(409, 'That change refers to a record that does not exist or is still in use', 'conflict');
    case '22P02':
    case '22003':
      return new HttpError(400, 'A value is out of range or malformed', 'bad_request');
    default:
      return null;
  }
}

function isConnectionFailure(err: unknown): boolean {
  const code = (err as { code?: string })?.code;
  return code === 'ECONNREFUSED' || code === '57P01' || code === '57P03' || code === 'ECONNRESET';
}

export const apiNotFound: RequestHandler = (_req, _res, next) => {
  next(new HttpError(404, 'No such API route', 'not_found'));
};

export const errorHandler: ErrorRequestHandler = (err, _req, res, _next) => {
  const cause = (err as { cause?: PgLikeError }).cause;
  const mapped =
    err instanceof HttpError
      ? err
      : (fromDatabase(err as PgLikeError) ?? (cause ? fromDatabase(cause) : null));
  if (mapped) {
    res.status(mapped.status).json({ error: mapped.message, code: mapped.code, details: mapped.details });
    return;
  }
  const status = (err as { status?: number; statusCode?: number }).status ?? (err as { statusCode?: number }).statusCode;
  if (status && status >= 400 && status < 500) {
    res.status(status).json({ error: (err as Error).message, code: (err as { code?: string }).code });
    return;
  }
  if (isConnectionFailure(err) || isConnectionFailure(cause)) {
    res.status(503).json({ error: 'The database is not reachable right now; try again shortly', code: 'db_unavailable' });
    return;
  }
  console.error(err);
  res.status(500).json({ error: 'Something went wrong on the server', code: 'internal' });
};
