import { ApiError, type Issue } from './ApiError.js';

/** The readable half of the double-submit cookie pair set at sign-in. */
export function csrfToken(): string | undefined {
  const match = document.cookie.split('; ').find((c) => c.startsWith('tw_csrf='));
  return match ? decodeURIComponent(match.slice('tw_csrf='.length)) : undefined;
}

const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

/**
 * The one place the browser talks to the API. Cookies ride along, unsafe methods carry the CSRF
 * header, and every non-2xx becomes an ApiError holding the server's message.
 */
export async function api<T>(method: Method, path: string, body?: unknown): Promise<T> {
  return send<T>(method, path, body === undefined ? undefined : JSON.stringify(body), body === undefined ? undefined : 'application/json');
}

/** POST a file itself as the request body (e.g. a background array), typed as given. */
export function apiUpload<T>(path: string, file: Blob, contentType: string): Promise<T> {
  return send<T>('POST', path, file, contentType);
}

async function send<T>(method: Method, path: string, body: BodyInit | undefined, contentType: string | undefined): Promise<T> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (contentType) headers['Content-Type'] = contentType;
  if (UNSAFE.has(method)) {
    const token = csrfToken();
    if (token) headers['X-CSRF-Token'] = token;
  }
  let res: Response;
  try {
    res = await fetch(path, { method, headers, credentials: 'same-origin', body });
  } catch {
    throw new ApiError(0, 'the server could not be reached; check your connection and try again');
  }
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  let data: unknown = undefined;
  if (text) {
    try {
      data = JSON.parse(text);
    } catch {
      if (!res.ok) throw new ApiError(res.status, `the server answered ${res.status} ${res.statusText}`.trim());
      throw new ApiError(res.status, 'the server sent a reply that is not JSON');
    }
  }
  if (!res.ok) {
    const b = (data ?? {}) as { error?: unknown; issues?: unknown; requestId?: unknown };
    const message = typeof b.error === 'string' ? b.error : `the server answered ${res.status}`;
    const issues = Array.isArray(b.issues) ? (b.issues as Issue[]) : [];
    throw new ApiError(res.status, message, issues, typeof b.requestId === 'string' ? b.requestId : undefined);
  }
  return data as T;
}

/** Builds `/api/runs?status=finished&page=2`, dropping empty values. */
export function withQuery(path: string, params: Record<string, string | number | undefined | null>): string {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) {
    if (v !== undefined && v !== null && v !== '') q.set(k, String(v));
  }
  const s = q.toString();
  return s ? `${path}?${s}` : path;
}
