import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import { UserEntity } from '../../db/entities';
import type { AuditService } from '../audit/audit.service';

/** Consecutive wrong passwords before an account is locked, and for how long. */
export const LOCKOUT_AFTER = 5;
export const LOCKOUT_MINUTES = 15;

/**
 * The one answer to an unknown e-mail, a wrong password and a locked account alike: a different
 * lockout message told an outsider which e-mail addresses have accounts (issue #18, point 10).
 */
export const SIGN_IN_REFUSED = `Wrong e-mail or password. After ${LOCKOUT_AFTER} wrong passwords in a row an account is locked for ${LOCKOUT_MINUTES} minutes; an administrator can unlock it sooner.`;

// Compared against when the e-mail is unknown, so both paths cost one bcrypt compare.
const DUMMY_HASH = bcrypt.hashSync('emberlot-timing-equaliser', 10);

export type SignInResult = { ok: true; user: SessionUser } | { ok: false; message: string };

export const toSessionUser = (u: UserEntity): SessionUser => ({ id: u.id, email: u.email, name: u.name, role: u.role });

export class AuthService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
    private readonly now: () => Date,
  ) {}

  async verify(email: string, password: string): Promise<SignInResult> {
    const repo = this.ds.getRepository(UserEntity);
    const u = await repo.findOne({ where: { email: email.trim().toLowerCase() } });
    if (!u) {
      await bcrypt.compare(password, DUMMY_HASH);
      return { ok: false, message: SIGN_IN_REFUSED };
    }
    const now = this.now();
    if (u.lockedUntil && u.lockedUntil > now) {
      // Same message and the same bcrypt cost as an unknown e-mail: the answer must not tell
      // whether the account exists, and the password is not even compared while it is locked.
      await bcrypt.compare(password, DUMMY_HASH);
      return { ok: false, message: SIGN_IN_REFUSED };
    }
    const good = await bcrypt.compare(password, u.passwordHash);
    if (!good) {
      const failed = u.failedSignIns + 1;
      const lock = failed >= LOCKOUT_AFTER ? new Date(now.getTime() + LOCKOUT_MINUTES * 60000) : null;
      await repo.update(u.id, { failedSignIns: lock ? 0 : failed, lockedUntil: lock });
      if (lock) {
        await this.audit.record({
          actor: 'system',
          action: 'user.locked',
          entity: 'user',
          entityId: u.id,
          details: { after: LOCKOUT_AFTER },
        });
      }
      return { ok: false, message: SIGN_IN_REFUSED };
    }
    // Only someone who knows the password learns that the account exists and is deactivated.
    if (!u.active) return { ok: false, message: 'This account is deactivated. Ask an administrator.' };
    await repo.update(u.id, { failedSignIns: 0, lockedUntil: null, lastSignInAt: now });
    return { ok: true, user: toSessionUser(u) };
  }

  /** Reload on every request so a deactivation or role change takes effect at once. */
  async load(id: string): Promise<SessionUser | null> {
    if (!/^[0-9a-f-]{36}$/i.test(id)) return null;
    const u = await this.ds.getRepository(UserEntity).findOne({ where: { id } });
    return u && u.active ? toSessionUser(u) : null;
  }
}
