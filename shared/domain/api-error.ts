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
  if (!isFieldMap(fields)) return null;
  const plain = Object.fromEntries(Object.entries(fields).map(([k, list]) => [k, list.map(plainFieldMessage)]));
  return { code, message, fields: plain };
}

/**
 * A validator's default wording in plain words for a form: zod's English defaults ("Invalid
 * input: expected number, received undefined", "Too small: expected number to be >=1") become
 * what a person should do ("Enter a number", "Enter at least 1"). A message a schema wrote itself
 * ("Enter a part number") passes unchanged. Used by the API's field errors (server/http/errors.ts),
 * by `readApiError` for the app, and by forms that check with a schema before sending.
 */
export function plainFieldMessage(message: string): string {
  const m = message;
  let r: RegExpExecArray | null;
  if (/^Invalid input: expected (number|int|bigint), received/.test(m)) return 'Enter a number';
  if (/^Invalid input: expected boolean, received/.test(m)) return 'Choose yes or no';
  if (/^Invalid input: expected \w+, received (undefined|null)$/.test(m)) return 'Fill this in';
  if ((r = /^Too small: expected number to be >=(-?[\d.e+-]+)$/.exec(m))) return `Enter at least ${r[1]}`;
  if ((r = /^Too small: expected number to be >(-?[\d.e+-]+)$/.exec(m))) return `Enter more than ${r[1]}`;
  if ((r = /^Too big: expected number to be <=(-?[\d.e+-]+)$/.exec(m))) return `Enter at most ${r[1]}`;
  if ((r = /^Too big: expected number to be <(-?[\d.e+-]+)$/.exec(m))) return `Enter less than ${r[1]}`;
  if ((r = /^Too small: expected string to have >=(\d+) characters?$/.exec(m)))
    return r[1] === '1' ? 'Fill this in' : `Use at least ${r[1]} characters`;
  if ((r = /^Too big: expected string to have <=(\d+) characters?$/.exec(m))) return `Use at most ${r[1]} characters`;
  if ((r = /^Too small: expected array to have >=(\d+) items?$/.exec(m))) return `Give at least ${r[1]}`;
  if ((r = /^Too big: expected array to have <=(\d+) items?$/.exec(m))) return `Give at most ${r[1]}`;
  if (/^Invalid input: expected int, received number$/.test(m) || /^Invalid input: expected an integer/.test(m))
    return 'Enter a whole number';
  if ((r = /^Invalid option: expected one of (.+)$/.exec(m))) return `Choose one of ${r[1].replace(/"/g, '').split('|').join(', ')}`;
  if ((r = /^Unrecognized keys?: (.+)$/.exec(m))) return `Remove what is not expected here: ${r[1].replace(/"/g, '')}`;
  if (/^Invalid (ISO )?(datetime|date)/.test(m)) return 'Enter a date and time such as 2031-03-04 08:00';
  if (/^Invalid (email|e-mail)/i.test(m)) return 'Enter an e-mail address';
  if (/^Invalid (input|string|UUID|uuid)\b/.test(m)) return 'This value is not valid';
  return m;
}
