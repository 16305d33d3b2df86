import type { CaptureSummary, UploadCapturesResponse } from '../../shared/captures';
import type { JobDetail } from '../../shared/jobs';
import type { TestPoint } from '../../shared/test-points';
import { EXIT, PushError } from './push-args';

/** The API as the push command sees it: bearer token, JSON answers, errors turned into exit codes. */
export class PushApi {
  constructor(
    readonly baseUrl: string,
    private readonly token: string,
  ) {}

  get authHeader(): Record<string, string> {
    return { authorization: `Bearer ${this.token}` };
  }

  async get<T>(path: string, notFound: string): Promise<T> {
    let res: Response;
    try {
      res = await fetch(this.baseUrl + path, { headers: this.authHeader });
    } catch (err) {
      throw new PushError(`Cannot reach ${this.baseUrl}: ${err instanceof Error ? (err.cause instanceof Error ? err.cause.message : err.message) : String(err)}`, EXIT.server);
    }
    const text = await res.text();
    return answer<T>(res.status, text, notFound);
  }

  job(jobId: number, shown: string): Promise<JobDetail> {
    return this.get<JobDetail>(`/api/jobs/${jobId}`, `Job ${shown} was not found in your shop`);
  }

  testPoints(jobId: number): Promise<TestPoint[]> {
    return this.get<TestPoint[]>(`/api/jobs/${jobId}/test-points`, 'Job not found');
  }

  capture(id: number): Promise<CaptureSummary> {
    return this.get<CaptureSummary>(`/api/captures/${id}`, `Capture ${id} not found`);
  }
}

function serverMessage(text: string): string {
  try {
    const body = JSON.parse(text) as { error?: unknown };
    if (typeof body.error === 'string') return body.error;
  } catch {
    /* not JSON */
  }
  return text.slice(0, 200) || 'no details';
}

/** Maps an HTTP answer to its body or to the push command's error and exit code. */
export function answer<T>(status: number, text: string, notFound: string): T {
  if (status >= 200 && status < 300) return JSON.parse(text) as T;
  const said = serverMessage(text);
  if (status === 401) throw new PushError(`The server refused the token: ${said}`, EXIT.token);
  if (status === 403) throw new PushError(`The token may not do this: ${said}. Use a token with the "upload captures" scope from a technician's or owner's account.`, EXIT.token);
  if (status === 404) throw new PushError(notFound, EXIT.notFound);
  if (status === 400 || status === 413 || status === 415 || status === 409) throw new PushError(`The server refused the upload: ${said}`, EXIT.refused);
  throw new PushError(`The server answered ${status}: ${said}`, EXIT.server);
}

export const parseUpload = (status: number, text: string, shown: string) => answer<UploadCapturesResponse>(status, text, `Job ${shown} was not found in your shop`);
