import type { DataSource, EntityManager } from 'typeorm';
import type { AuditChainReport, AuditEntryView, AuditPage, AuditQuery } from '../../../shared/schemas/audit';
import { AuditLogEntity } from '../../db/entities';
import { checkChain, entryHash } from './audit-chain';
import { chainBatch, findEntries, lastHash, lockChain } from './audit.data';

export interface AuditEntry {
  /** A signed-in person (or a seeded one), or the scheduler and protection. */
  actor: { id: string; email: string } | 'system';
  action: string;
  entity: string;
  entityId?: string | null;
  reason?: string | null;
  details?: Record<string, unknown>;
}

const toView = (r: AuditLogEntity): AuditEntryView => ({
  id: String(r.id),
  at: r.at.toISOString(),
  actor: r.actor,
  action: r.action,
  entity: r.entity,
  entityId: r.entityId,
  reason: r.reason,
  details: r.details ?? {},
  hash: r.hash,
});

/**
 * Append-only record of who did what, when and why — the single writer of audit_log. Each entry
 * is chained to the one before by a hash (audit-chain.ts); one advisory lock per transaction
 * serialises writers so the chain never forks. Pass the transaction's manager to keep it atomic.
 */
export class AuditService {
  constructor(private readonly ds: DataSource) {}

  async record(e: AuditEntry, manager?: EntityManager): Promise<void> {
    if (manager?.queryRunner?.isTransactionActive) return this.append(manager, e);
    await (manager ?? this.ds.manager).transaction((m) => this.append(m, e));
  }

  private async append(m: EntityManager, e: AuditEntry): Promise<void> {
    await lockChain(m);
    const prevHash = await lastHash(m);
    const row = {
      at: new Date(),
      actorId: e.actor === 'system' ? null : e.actor.id,
      actor: e.actor === 'system' ? 'system' : e.actor.email,
      action: e.action,
      entity: e.entity,
      entityId: e.entityId ?? null,
      reason: e.reason ?? null,
      // Stored as JSON and hashed as it will read back (undefined dropped, dates as strings).
      // eslint-disable-next-line @typescript-eslint/no-explicit-any -- TypeORM's insert typing cannot take `unknown` values in a jsonb column
      details: JSON.parse(JSON.stringify(e.details ?? {})) as Record<string, any>,
      prevHash,
    };
    await m.insert(AuditLogEntity, { ...row, hash: entryHash(row) });
  }

  /** Entries matching the filter, newest first. */
  async list(q: AuditQuery): Promise<AuditPage> {
    const rows = await findEntries(this.ds.manager, q, q.limit + 1);
    return { items: rows.slice(0, q.limit).map(toView), more: rows.length > q.limit };
  }

  /** Walks the whole chain in id order and reports the first entry that does not match. */
  async verify(): Promise<AuditChainReport> {
    let afterId = '0';
    let prev: string | null = null;
    let checked = 0;
    for (;;) {
      const rows = await chainBatch(this.ds.manager, afterId, 2000);
      if (!rows.length) return { ok: true, checked, firstBreak: null };
      const r = checkChain(
        rows.map((x) => ({ ...x, id: String(x.id) })),
        prev,
      );
      if (r.problem) return { ok: false, checked: checked + rows.findIndex((x) => String(x.id) === r.problem!.id), firstBreak: r.problem };
      checked += rows.length;
      prev = r.last;
      afterId = String(rows[rows.length - 1].id);
    }
  }
}
