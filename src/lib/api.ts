// The one way the client talks to the API: JSON in and out, the CSRF token on every write, and
// `{ error: { code, message } }` answers turned into thrown ApiErrors.

/** One field problem of a 400 VALIDATION answer; `path` is joined with dots (`bleed.size`). */
export interface FieldIssue {
  path: string;
  message: string;
}

export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: FieldIssue[],
  ) {
    super(message);
  }
}

let csrfToken: string | null = null;

export function setCsrfToken(token: string | null): void {
  csrfToken = token;
}

async function refreshCsrfToken(): Promise<void> {
  const res = await fetch('/api/session', { credentials: 'same-origin' });
  if (res.ok) csrfToken = ((await res.json()) as { csrfToken: string }).csrfToken;
}

/** The CSRF token for writes that do not go through apiRequest (multipart uploads with progress). */
export async function ensureCsrfToken(): Promise<string | null> {
  if (!csrfToken) await refreshCsrfToken();
  return csrfToken;
}

export interface RequestOptions {
  method?: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';
  body?: unknown;
}

export async function apiRequest<T>(path: string, options: RequestOptions = {}, retried = false): Promise<T> {
  const method = options.method ?? 'GET';
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (options.body !== undefined) headers['Content-Type'] = 'application/json';
  if (method !== 'GET') {
    if (!csrfToken) await refreshCsrfToken();
    if (csrfToken) headers['X-CSRF-Token'] = csrfToken;
  }
  let res: Response;
  try {
    res = await fetch(`/api${path}`, {
      method,
      headers,
      credentials: 'same-origin',
      body: options.body === undefined ? undefined : JSON.stringify(options.body),
    });
  } catch {
    throw new ApiError(0, 'OFFLINE', 'The server cannot be reached. Is Bleedwright still running?');
  }
  if (res.status === 204) return undefined as T;
  const data = (await res.json().catch(() => null)) as { error?: { code: string; message: string; details?: FieldIssue[] } } | null;
  if (!res.ok) {
    const code = data?.error?.code ?? 'HTTP_' + res.status;
    // A session that expired or was replaced has a new token: fetch it and try once more.
    if (code === 'CSRF' && !retried) {
      csrfToken = null;
      return apiRequest<T>(path, options, true);
    }
    const details = Array.isArray(data?.error?.details) ? data.error.details : undefined;
    throw new ApiError(res.status, code, data?.error?.message ?? `The server answered ${res.status}.`, details);
  }
  return data as T;
}
