import type { DataSource, EntityManager } from 'typeorm';
import { AuditLogEntity } from '../../db/entities';
import type { SessionUser } from '../../../shared/schemas/auth';

export interface AuditEntry {
  actor: SessionUser | 'system';
  action: string;
  entity: string;
  entityId?: string | null;
  reason?: string | null;
  details?: Record<string, unknown>;
}

/** Append-only record of who did what, when and why. Pass the transaction's manager to keep it atomic. */
export class AuditService {
  constructor(private readonly ds: DataSource) {}

  async record(e: AuditEntry, manager?: EntityManager): Promise<void> {
    const m = manager ?? this.ds.manager;
    await m.insert(AuditLogEntity, {
      actorId: e.actor === 'system' ? null : e.actor.id,
      actor: e.actor === 'system' ? 'system' : e.actor.email,
      action: e.action,
      entity: e.entity,
      entityId: e.entityId ?? null,
      reason: e.reason ?? null,
      // eslint-disable-next-line @typescript-eslint/no-explicit-any -- TypeORM's insert typing cannot take `unknown` values in a jsonb column
      details: (e.details ?? {}) as Record<string, any>,
    });
  }
}
