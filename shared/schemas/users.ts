import { z } from 'zod';
import { roleSchema } from './auth';

export const passwordSchema = z.string().min(10, 'Use at least 10 characters').max(200, 'Use at most 200 characters');

export const createUserSchema = z.object({
  email: z.string().trim().toLowerCase().email('Enter an e-mail address').max(254),
  name: z.string().trim().min(1, 'Enter a name').max(120),
  role: roleSchema,
  password: passwordSchema,
});
export type CreateUserInput = z.infer<typeof createUserSchema>;

export const updateUserSchema = z
  .object({
    name: z.string().trim().min(1).max(120).optional(),
    role: roleSchema.optional(),
    active: z.boolean().optional(),
    password: passwordSchema.optional(),
    notifyAlarms: z.boolean().optional(),
    notifyReadPoints: z.boolean().optional(),
    /** The per-user grant to approve safety overrides (admins only). */
    safetyApprover: z.boolean().optional(),
  })
  .strict()
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' });
export type UpdateUserInput = z.infer<typeof updateUserSchema>;

export const userSchema = z.object({
  id: z.string().uuid(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  active: z.boolean(),
  notifyAlarms: z.boolean(),
  notifyReadPoints: z.boolean(),
  safetyApprover: z.boolean(),
  lastSignInAt: z.string().nullable(),
  createdAt: z.string(),
});
export type User = z.infer<typeof userSchema>;

export const idParamSchema = z.object({ id: z.string().uuid('Not a valid id') });
