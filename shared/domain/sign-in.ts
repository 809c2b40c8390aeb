/**
 * The sign-in form's first check, by hand so the sign-in screen loads without zod. The server
 * still validates with `signInSchema` (shared/schemas/auth.ts, built from the same words) and its
 * stricter e-mail check answers with field errors the screen shows.
 */

export const SIGN_IN_WORDS = {
  email: 'Enter an e-mail address',
  password: 'Enter your password',
} as const;

/** Longest password accepted (bcrypt reads at most 72 bytes; the rest is refused, not cut). */
export const PASSWORD_MAX = 200;

/** A rough shape check (something@something.something, no spaces); the server's check is stricter. */
const LOOKS_LIKE_EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]+$/;

export type SignInField = 'email' | 'password';

/** The body to send, or the first problem of each field. */
export function checkSignIn(input: {
  email: string;
  password: string;
}): { ok: true; body: { email: string; password: string } } | { ok: false; errors: Partial<Record<SignInField, string>> } {
  const email = input.email.trim().toLowerCase();
  const errors: Partial<Record<SignInField, string>> = {};
  if (!LOOKS_LIKE_EMAIL.test(email)) errors.email = SIGN_IN_WORDS.email;
  if (input.password.length < 1 || input.password.length > PASSWORD_MAX) errors.password = SIGN_IN_WORDS.password;
  return Object.keys(errors).length ? { ok: false, errors } : { ok: true, body: { email, password: input.password } };
}
