/** An error that maps straight to an HTTP status and a message the user can read. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly code?: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

export const notFound = (what: string) => new HttpError(404, `${what} not found`, 'not_found');
export const conflict = (message: string) => new HttpError(409, message, 'conflict');
export const badRequest = (message: string, details?: unknown) =>
  new HttpError(400, message, 'bad_request', details);
