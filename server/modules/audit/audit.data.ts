import type { EntityManager } from 'typeorm';
import type { AuditQuery } from '../../../shared/schemas/audit';
import { AuditLogEntity } from '../../db/entities';

/** One advisory lock serialises every audit write, so two transactions never link to the same predecessor. */
export const AUDIT_CHAIN_LOCK = 478_021;

export async function lockChain(m: EntityManager): Promise<void> {
  await m.query('SELECT pg_advisory_xact_lock($1)', [AUDIT_CHAIN_LOCK]);
}

export async function lastHash(m: EntityManager): Promise<string | null> {
  const rows: Array<{ hash: string | null }> = await m.query('SELECT hash FROM audit_log ORDER BY id DESC LIMIT 1');
  return rows[0]?.hash ?? null;
}

/** A batch of entries in id order after `afterId` (for the chain check). */
export function chainBatch(m: EntityManager, afterId: string, take: number): Promise<AuditLogEntity[]> {
  return m
    .getRepository(AuditLogEntity)
    .createQueryBuilder('a')
    .where('a.id > :afterId', { afterId })
    .orderBy('a.id', 'ASC')
    .limit(take)
    .getMany();
}

/** Entries matching the filter, newest first; one more than `limit` to tell whether there are more. */
export function findEntries(m: EntityManager, q: AuditQuery, limit: number): Promise<AuditLogEntity[]> {
  const b = m.getRepository(AuditLogEntity).createQueryBuilder('a');
  if (q.actor) {
    b.andWhere(`(a.actor ILIKE :actor ESCAPE '\\' OR a.actor_id IN (SELECT u.id FROM users u WHERE u.name ILIKE :actor ESCAPE '\\'))`, {
      actor: `%${likeEscape(q.actor)}%`,
    });
  }
  if (q.entity) b.andWhere('a.entity = :entity', { entity: q.entity });
  if (q.entityId) b.andWhere('a.entity_id = :entityId', { entityId: q.entityId });
  if (q.action) b.andWhere('a.action ILIKE :action', { action: `${likeEscape(q.action)}%` });
  if (q.from) b.andWhere('a.at >= :from', { from: q.from });
  if (q.to) b.andWhere('a.at <= :to', { to: q.to });
  return b.orderBy('a.id', 'DESC').limit(limit).getMany();
}

const likeEscape = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);
