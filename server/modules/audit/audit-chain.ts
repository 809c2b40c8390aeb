/**
 * The audit log's hash chain: each entry stores the hash of the entry before it and its own hash,
 * SHA-256 over the previous hash and the entry's canonical JSON. Editing, deleting or inserting a
 * row directly in the database breaks the chain at that row (a hash no longer matches its content,
 * or a link no longer matches the row before). The usual construction of a tamper-evident log
 * (common practice; e.g. RFC 6962 builds Certificate Transparency on hashes of earlier entries).
 * Limit: removing the newest entries leaves a shorter chain that still verifies — the count in the
 * last verify report (or a copy of the head hash kept elsewhere) is what shows that.
 */
import { createHash } from 'node:crypto';
import { canonicalJson } from '../../../shared/canonical-json';

/** What of an entry the hash covers: everything but its id and its own hash. */
export interface ChainedEntry {
  at: Date;
  actorId: string | null;
  actor: string;
  action: string;
  entity: string;
  entityId: string | null;
  reason: string | null;
  details: unknown;
  prevHash: string | null;
}

export function entryHash(e: ChainedEntry): string {
  const body = canonicalJson({
    prevHash: e.prevHash,
    at: e.at.toISOString(),
    actorId: e.actorId,
    actor: e.actor,
    action: e.action,
    entity: e.entity,
    entityId: e.entityId,
    reason: e.reason,
    details: e.details ?? {},
  });
  return createHash('sha256').update(body, 'utf8').digest('hex');
}

export const sha256Hex = (text: string): string => createHash('sha256').update(text, 'utf8').digest('hex');

/** Checks entries in id order, continuing from `prev` (the hash of the entry before the first). */
export function checkChain(
  rows: Array<ChainedEntry & { id: string; hash: string | null }>,
  prev: string | null,
): { last: string | null; problem: { id: string; problem: string } | null } {
  let last = prev;
  for (const r of rows) {
    if (r.prevHash !== last) {
      return {
        last,
        problem: {
          id: r.id,
          problem: `entry ${r.id} links to ${r.prevHash ?? 'nothing'}, but the entry before it hashes to ${last ?? 'nothing'}`,
        },
      };
    }
    const h = entryHash(r);
    if (r.hash !== h) {
      return {
        last,
        problem: {
          id: r.id,
          problem: `entry ${r.id} was changed after it was written (its content hashes to ${h}, stored ${r.hash ?? 'nothing'})`,
        },
      };
    }
    last = h;
  }
  return { last, problem: null };
}
