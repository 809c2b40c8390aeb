/**
 * The one way the app talks to the API: same origin, session cookie, JSON in and out.
 * Every failure becomes an ApiError so screens can show one plain sentence (see describeError).
 */
import { readApiError, type ErrorCode } from '@/shared/domain/api-error';

/** A request that takes longer than this is abandoned, so no spinner runs forever. */
export const REQUEST_TIMEOUT_MS = 20_000;

/** Codes the client adds for failures that never reached a JSON answer. */
export type ClientErrorCode = 'network' | 'timeout' | 'bad_response';

export class ApiError extends Error {
  readonly status: number;
  readonly code: ErrorCode | ClientErrorCode;
  readonly fields?: Record<string, string[]>;

  constructor(status: number, code: ErrorCode | ClientErrorCode, message: string, fields?: Record<string, string[]>) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.fields = fields;
  }

  /** First message per field, ready for a form's inline errors. */
  fieldErrors(): Record<string, string> {
    const out: Record<string, string> = {};
    for (const [k, v] of Object.entries(this.fields ?? {})) if (v[0]) out[k] = v[0];
    return out;
  }
}

export function isApiError(e: unknown): e is ApiError {
  return e instanceof ApiError;
}

export function isUnauthenticated(e: unknown): boolean {
  return isApiError(e) && e.status === 401;
}

/** Turns any error into one sentence a lab user can act on. */
export function describeError(e: unknown): string {
  if (isApiError(e)) {
    switch (e.code) {
      case 'network':
        return 'Emberlot could not reach the server. Check the network connection and try again.';
      case 'timeout':
        return 'The server took too long to answer. Try again in a moment.';
      case 'bad_response':
        return 'The server sent an answer Emberlot could not read. Try again; if it keeps happening, tell an administrator.';
      case 'internal':
        return 'Something went wrong on the server. Try again; if it keeps happening, tell an administrator.';
      case 'forbidden':
        return e.message || 'Your role cannot do this. Ask an administrator if you need it.';
      case 'not_found':
        return e.message || 'This item no longer exists. It may have been removed.';
      default:
        return e.message || 'The request could not be completed.';
    }
  }
  return 'Something unexpected went wrong. Try again.';
}

type Json = Record<string, unknown> | unknown[];

export interface RequestOptions {
  method?: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';
  body?: Json;
  signal?: AbortSignal;
  timeoutMs?: number;
}

async function parseBody(res: Response): Promise<unknown> {
  if (res.status === 204) return undefined;
  const text = await res.text();
  if (!text) return undefined;
  try {
    return JSON.parse(text);
  } catch {
    throw new ApiError(res.status, 'bad_response', 'The server sent an answer Emberlot could not read.');
  }
}

const fallbackCode = (status: number): ErrorCode =>
  status === 400
    ? 'bad_request'
    : status === 401
      ? 'unauthenticated'
      : status === 403
        ? 'forbidden'
        : status === 404
          ? 'not_found'
          : status === 409
            ? 'conflict'
            : status === 413
              ? 'too_large'
              : status === 422
                ? 'unprocessable'
                : status === 429
                  ? 'too_many_requests'
                  : 'internal';

/**
 * A body our own API answered with, typed as the route's declared response. The app trusts the
 * server's shapes (the server builds them from the same shared/schemas types); this is the one
 * place that trust is written down, for the paths that cannot go through `api` (uploads, streams).
 */
export function serverBody<T>(body: unknown): T {
  return body as T;
}

/** Calls `path` (starting with /api) on the same origin and returns the parsed JSON body. */
export async function api<T>(path: string, opts: RequestOptions = {}): Promise<T> {
  const controller = new AbortController();
  const timeout = setTimeout(() => controller.abort(), opts.timeoutMs ?? REQUEST_TIMEOUT_MS);
  const onOuterAbort = () => controller.abort();
  opts.signal?.addEventListener('abort', onOuterAbort);
  let res: Response;
  try {
    res = await fetch(path, {
      method: opts.method ?? 'GET',
      credentials: 'include',
      headers:
        opts.body !== undefined ? { 'Content-Type': 'application/json', Accept: 'application/json' } : { Accept: 'application/json' },
      body: opts.body !== undefined ? JSON.stringify(opts.body) : undefined,
      signal: controller.signal,
    });
  } catch (e) {
    if (opts.signal?.aborted) throw e;
    if (controller.signal.aborted) throw new ApiError(0, 'timeout', 'The server took too long to answer.');
    throw new ApiError(0, 'network', 'Emberlot could not reach the server.');
  } finally {
    clearTimeout(timeout);
    opts.signal?.removeEventListener('abort', onOuterAbort);
  }
  const body = await parseBody(res);
  if (res.ok) return serverBody<T>(body);
  const error = readApiError(body);
  if (error) {
    const { code, message, fields } = error;
    throw new ApiError(res.status, code, message, fields);
  }
  throw new ApiError(res.status, fallbackCode(res.status), `The server answered ${res.status}.`);
}
