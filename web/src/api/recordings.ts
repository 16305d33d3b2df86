import type { ApiError } from '@shared/errors';
import type { ChunkReceipt, RecordingFinished, RecordingOpenInput, RecordingSummary } from '@shared/recordings';
import { ApiRequestError, csrfTokenForUpload, http } from './http';
import { qs } from './query';

/** PUTs raw PCM bytes (the JSON client cannot); a stale form token is fetched again once. */
async function putChunk(id: number, seq: number, bytes: Uint8Array, fresh = false): Promise<ChunkReceipt> {
  const res = await fetch(`/api/recordings/${id}/chunks/${seq}`, {
    method: 'PUT',
    credentials: 'same-origin',
    headers: { 'Content-Type': 'application/octet-stream', Accept: 'application/json', 'x-csrf-token': await csrfTokenForUpload(fresh) },
    body: bytes as Uint8Array<ArrayBuffer>,
  });
  const body = (await res.json().catch(() => null)) as unknown;
  if (res.ok) return body as ChunkReceipt;
  const err = (body ?? {}) as Partial<ApiError>;
  if (res.status === 403 && err.code === 'csrf' && !fresh) return putChunk(id, seq, bytes, true);
  throw new ApiRequestError(res.status, err.error ?? `Chunk ${seq} was refused (${res.status})`, err.code, err.details);
}

export const recordingsApi = {
  open: (body: RecordingOpenInput) => http.post<RecordingSummary>('/api/recordings', body),
  list: (q: { jobId?: number; state?: 'open' | 'finished' } = {}) => http.get<RecordingSummary[]>(`/api/recordings${qs(q)}`),
  get: (id: number) => http.get<RecordingSummary>(`/api/recordings/${id}`),
  putChunk: (id: number, seq: number, bytes: Uint8Array) => putChunk(id, seq, bytes),
  finish: (id: number) => http.post<RecordingFinished>(`/api/recordings/${id}/finish`),
  discard: (id: number) => http.del<void>(`/api/recordings/${id}`),
};
