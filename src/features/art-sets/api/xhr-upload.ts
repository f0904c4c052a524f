import { ApiError, ensureCsrfToken } from '../../../lib/api';

/**
 * A multipart POST through XMLHttpRequest, because fetch cannot report upload progress. Answers and
 * errors are shaped like apiRequest's: JSON back, `{ error: { code, message } }` thrown as ApiError.
 */
export async function postMultipart<T>(path: string, form: FormData, onProgress?: (share: number) => void): Promise<{ status: number; body: T }> {
  const send = (token: string | null) =>
    new Promise<{ status: number; body: unknown }>((resolve, reject) => {
      const xhr = new XMLHttpRequest();
      xhr.open('POST', `/api${path}`);
      xhr.responseType = 'json';
      xhr.setRequestHeader('Accept', 'application/json');
      if (token) xhr.setRequestHeader('X-CSRF-Token', token);
      xhr.upload.onprogress = (e) => {
        if (e.lengthComputable && onProgress) onProgress(e.loaded / e.total);
      };
      xhr.onload = () => resolve({ status: xhr.status, body: xhr.response });
      xhr.onerror = () => reject(new ApiError(0, 'OFFLINE', 'The upload did not reach the server. Is Bleedwright still running?'));
      xhr.send(form);
    });

  let res = await send(await ensureCsrfToken());
  type ErrorBody = { error?: { code?: string; message?: string } } | null;
  if ((res.body as ErrorBody)?.error?.code === 'CSRF') {
    // The session changed since the token was read: fetch a fresh one and try once more.
    const fresh = await fetch('/api/session', { credentials: 'same-origin' }).then((r) => r.json() as Promise<{ csrfToken: string }>);
    res = await send(fresh.csrfToken);
  }
  if (res.status < 200 || res.status >= 300) {
    const error = (res.body as ErrorBody)?.error;
    const fallback =
      res.status === 413 ? 'The file is larger than the server accepts.' : `The server answered ${res.status || 'nothing'}.`;
    throw new ApiError(res.status, error?.code ?? (res.status === 413 ? 'UPLOAD_TOO_LARGE' : `HTTP_${res.status}`), error?.message ?? fallback);
  }
  return { status: res.status, body: res.body as T };
}
