/** The one error shape every API response uses: `{ error: { code, message, fields? } }`. */
import { z } from 'zod';

import { ERROR_CODES } from '../domain/api-error';
export { ERROR_CODES, type ErrorCode, readApiError } from '../domain/api-error';

export const apiErrorSchema = z.object({
  error: z.object({
    code: z.enum(ERROR_CODES),
    message: z.string(),
    fields: z.record(z.string(), z.array(z.string())).optional(),
  }),
});
export type ApiErrorBody = z.infer<typeof apiErrorSchema>;
// readApiError (shared/domain/api-error.ts) is the same check by hand, for the app: the agreement
// test in tests/unit/api-error.test.ts keeps the two equal.
