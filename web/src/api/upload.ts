import type { ApiError } from '@shared/errors';
import { ApiRequestError, csrfTokenForUpload } from './http';

export interface UploadProgress {
  loaded: number;
  total: number;
}

/**
 * POSTs a multipart form with upload progress (fetch cannot report it), the CSRF header and the
 * same error shape as `http`. Resolves with the parsed JSON body.
 */
export async function uploadForm<T>(url: string, form: FormData, onProgress?: (p: UploadProgress) => void): Promise<T> {
  try {
    return await send<T>(url, form, await csrfTokenForUpload(), onProgress);
  } catch (err) {
    // A token gone stale (new session) is fetched again once, as `http` does.
    if (!(err instanceof ApiRequestError && err.status === 403 && err.code === 'csrf')) throw err;
    return send<T>(url, form, await csrfTokenForUpload(true), onProgress);
  }
}

function send<T>(url: string, form: FormData, token: string, onProgress?: (p: UploadProgress) => void): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', url);
    xhr.withCredentials = true;
    xhr.setRequestHeader('x-csrf-token', token);
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.responseType = 'text';
    if (onProgress) {
      xhr.upload.onprogress = (e) => {
        if (e.lengthComputable) onProgress({ loaded: e.loaded, total: e.total });
      };
    }
    xhr.onerror = () => reject(new ApiRequestError(0, 'The upload did not reach the server; check the connection and try again'));
    xhr.onabort = () => reject(new ApiRequestError(0, 'Upload cancelled'));
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : null;
      } catch {
        /* not JSON: a proxy's error page */
      }
      if (xhr.status >= 200 && xhr.status < 300) return resolve(body as T);
      const err = (body ?? {}) as Partial<ApiError>;
      reject(new ApiRequestError(xhr.status, err.error ?? `Upload failed (${xhr.status})`, err.code, err.details));
    };
    xhr.send(form);
  });
}
