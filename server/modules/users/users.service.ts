import { can } from '../../../shared/domain/permissions';
import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { CreateUserInput, UpdateUserInput, User } from '../../../shared/schemas/users';
import { UserEntity } from '../../db/entities';
import { conflict, forbidden, notFound, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { endSessionsOf } from './users.data';

/** bcrypt cost: ~60 ms per hash on this machine's class of CPU (bcryptjs, pure JS). */
export const BCRYPT_ROUNDS = 10;

export function toUser(u: UserEntity): User {
  return {
    id: u.id,
    email: u.email,
    name: u.name,
    role: u.role,
    active: u.active,
    notifyAlarms: u.notifyAlarms,
    notifyReadPoints: u.notifyReadPoints,
    safetyApprover: u.safetyApprover,
    lastSignInAt: u.lastSignInAt ? u.lastSignInAt.toISOString() : null,
    createdAt: u.createdAt.toISOString(),
  };
}

export class UsersService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
  ) {}

  async list(): Promise<User[]> {
    const rows = await this.ds.getRepository(UserEntity).find({ order: { active: 'DESC', name: 'ASC' } });
    return rows.map(toUser);
  }

  async create(actor: SessionUser, input: CreateUserInput): Promise<User> {
    return this.ds.transaction(async (m) => {
      const exists = await m.findOne(UserEntity, { where: { email: input.email } });
      if (exists) throw conflict(`A user with the e-mail ${input.email} already exists.`);
      const passwordHash = await bcrypt.hash(input.password, BCRYPT_ROUNDS);
      const u = await m.save(m.create(UserEntity, { email: input.email, name: input.name, role: input.role, passwordHash }));
      await this.audit.record(
        { actor, action: 'user.create', entity: 'user', entityId: u.id, details: { email: u.email, role: u.role } },
        m,
      );
      return toUser(u);
    });
  }

  /**
   * Admins change anything; everyone else may change only their own notification settings.
   * An admin cannot demote or deactivate themself (the lab would be left without an admin).
   */
  async update(actor: SessionUser, id: string, input: UpdateUserInput): Promise<User> {
    const self = actor.id === id;
    if (!can(actor.role, 'user.manage')) {
      const allowed = ['notifyAlarms', 'notifyReadPoints'];
      if (!self || Object.keys(input).some((k) => !allowed.includes(k))) {
        throw forbidden('Only an administrator can change other people or roles; you may change your own notification settings.');
      }
    }
    if (self && can(actor.role, 'user.manage') && (input.active === false || (input.role && !can(input.role, 'user.manage')))) {
      throw unprocessable('You cannot deactivate yourself or remove your own administrator role.');
    }
    return this.ds.transaction(async (m) => {
      const u = await m.findOne(UserEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!u) throw notFound('The user');
      const changes: Record<string, unknown> = {};
      if (input.name !== undefined) u.name = changes.name = input.name;
      if (input.role !== undefined) u.role = changes.role = input.role;
      if (input.active !== undefined) {
        u.active = changes.active = input.active;
        if (input.active) {
          u.failedSignIns = 0;
          u.lockedUntil = null;
        }
      }
      if (input.notifyAlarms !== undefined) u.notifyAlarms = changes.notifyAlarms = input.notifyAlarms;
      if (input.notifyReadPoints !== undefined) u.notifyReadPoints = changes.notifyReadPoints = input.notifyReadPoints;
      if (input.safetyApprover !== undefined) {
        const role = input.role ?? u.role;
        if (input.safetyApprover && !can(role, 'override.decide')) {
          throw unprocessable(
            `Someone with the ${role} role cannot decide safety overrides; grant the safety approval to an engineer, manager or administrator.`,
          );
        }
        u.safetyApprover = changes.safetyApprover = input.safetyApprover;
      }
      if (input.password !== undefined) {
        u.passwordHash = await bcrypt.hash(input.password, BCRYPT_ROUNDS);
        changes.password = 'changed';
      }
      await m.save(u);
      if (input.active === false || input.role !== undefined || input.password !== undefined) {
        // A deactivated user, a changed role or a new password ends that user's open sessions.
        await endSessionsOf(m, u.id);
      }
      await this.audit.record({ actor, action: 'user.update', entity: 'user', entityId: u.id, details: changes }, m);
      return toUser(u);
    });
  }
}
