/** The one error shape every API response uses: `{ error: { code, message, fields? } }`. */
import { z } from 'zod';

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

export const apiErrorSchema = z.object({
  error: z.object({
    code: z.enum(ERROR_CODES),
    message: z.string(),
    fields: z.record(z.string(), z.array(z.string())).optional(),
  }),
});
export type ApiErrorBody = z.infer<typeof apiErrorSchema>;
