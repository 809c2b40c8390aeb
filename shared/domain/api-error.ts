/**
 * The one error shape every API response uses: `{ error: { code, message, fields? } }`.
 * The codes are declared here; shared/schemas/errors.ts builds the zod schema the server uses, and
 * `readApiError` checks the same shape by hand for the app, so screens read errors without loading
 * zod (tests/unit/api-error.test.ts checks that both accept and refuse the same bodies).
 */

export const ERROR_CODES = [
  'bad_request', // 400: malformed body, query or params
  'unauthenticated', // 401: no session or expired session
  'forbidden', // 403: signed in, wrong role
  'not_found', // 404
  'conflict', // 409: duplicate, wrong state
  'too_large', // 413: upload or body over the limit
  'unprocessable', // 422: well-formed but breaks a rule (unsafe plan, rig too small)
  'too_many_requests', // 429: sign-in throttled
  'internal', // 500: never with a stack trace
] as const;
export type ErrorCode = (typeof ERROR_CODES)[number];

export interface ApiErrorDetail {
  code: ErrorCode;
  message: string;
  fields?: Record<string, string[]>;
}

const isErrorCode = (v: unknown): v is ErrorCode => typeof v === 'string' && (ERROR_CODES as readonly string[]).includes(v);
const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const isFieldMap = (v: unknown): v is Record<string, string[]> =>
  isRecord(v) && Object.values(v).every((list) => Array.isArray(list) && list.every((m) => typeof m === 'string'));

/** The error inside an API answer's body, or null when the body is not the error shape. */
export function readApiError(body: unknown): ApiErrorDetail | null {
  if (!isRecord(body) || !isRecord(body.error)) return null;
  const { code, message, fields } = body.error;
  if (!isErrorCode(code) || typeof message !== 'string') return null;
  if (fields === undefined) return { code, message };
  return isFieldMap(fields) ? { code, message, fields } : null;
}
