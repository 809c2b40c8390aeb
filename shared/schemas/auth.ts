import { z } from 'zod';
import { ROLES } from '../roles';
import { PASSWORD_MAX, SIGN_IN_WORDS } from '../domain/sign-in';

export const roleSchema = z.enum(ROLES);

export const signInSchema = z.object({
  email: z.string().trim().toLowerCase().email(SIGN_IN_WORDS.email),
  password: z.string().min(1, SIGN_IN_WORDS.password).max(PASSWORD_MAX),
});
export type SignInInput = z.infer<typeof signInSchema>;

/** What GET /api/auth/me and POST /api/auth/sign-in return. */
export const sessionUserSchema = z.object({
  id: z.string().uuid(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  /** Present on GET /api/auth/me: the user's own notification subscriptions. */
  notifyAlarms: z.boolean().optional(),
  notifyReadPoints: z.boolean().optional(),
  /** Present on GET /api/auth/me: holds the per-user safety-approval grant. */
  safetyApprover: z.boolean().optional(),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;
