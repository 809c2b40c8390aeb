import { z } from 'zod';
import { ROLES } from '../roles';

export const roleSchema = z.enum(ROLES);

export const signInSchema = z.object({
  email: z.string().trim().toLowerCase().email('Enter an e-mail address'),
  password: z.string().min(1, 'Enter your password').max(200),
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
