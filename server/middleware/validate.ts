import type { z } from 'zod';
import { HttpError } from '../http-error';

/** Parses request input with a shared zod schema; a failure becomes a 400 with the field problems. */
export function parse<S extends z.ZodType>(schema: S, input: unknown): z.infer<S> {
  const result = schema.safeParse(input);
  if (!result.success) {
    const details = result.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
    const first = details[0];
    const message = first ? `${first.path ? `${first.path}: ` : ''}${first.message}` : 'Invalid request';
    throw new HttpError(400, message, 'validation', details);
  }
  return result.data;
}

/** Route params and query ids are positive integers; anything else is a 404 rather than a crash. */
export function idParam(value: unknown, what = 'Record'): number {
  const n = typeof value === 'string' && /^\d{1,9}$/.test(value) ? Number(value) : NaN;
  if (!Number.isSafeInteger(n) || n <= 0) throw new HttpError(404, `${what} not found`, 'not_found');
  return n;
}
