/**
 * The sign-in screen's hand check never refuses what the server's signInSchema accepts, gives the
 * schema's words, and sends what the schema would store (trimmed, lower-case e-mail).
 */
import { checkSignIn } from '../../shared/domain/sign-in';
import { signInSchema } from '../../shared/schemas/auth';

const EMAILS = [
  'ada.okafor@harrowgate.example',
  '  Ada.Okafor@Harrowgate.Example ',
  'a@b.co',
  'plain',
  'two@@signs.example',
  'no-dot@example',
  'space in@side.example',
  '',
  '@harrowgate.example',
];
const PASSWORDS = ['', 'x', 'correct horse battery staple', 'p'.repeat(200), 'p'.repeat(201)];

describe('checkSignIn (sign-in screen) against signInSchema (server)', () => {
  it.each(EMAILS.flatMap((email) => PASSWORDS.map((password) => [email, password] as const)))('%j / password of %#', (email, password) => {
    const server = signInSchema.safeParse({ email, password });
    const hand = checkSignIn({ email, password });
    if (server.success) {
      // Never refuse what the server accepts, and send what it would read.
      expect(hand).toEqual({ ok: true, body: server.data });
    } else if (!hand.ok) {
      // Where both refuse a field, the words are the same.
      for (const issue of server.error.issues) {
        const field = String(issue.path[0]) as 'email' | 'password';
        if (hand.errors[field] && field === 'password' && password.length === 0) expect(hand.errors[field]).toBe(issue.message);
        if (hand.errors[field] && field === 'email') expect(hand.errors[field]).toBe(issue.message);
      }
    }
  });

  it('refuses an empty form with both words', () => {
    expect(checkSignIn({ email: ' ', password: '' })).toEqual({
      ok: false,
      errors: { email: 'Enter an e-mail address', password: 'Enter your password' },
    });
  });
});
