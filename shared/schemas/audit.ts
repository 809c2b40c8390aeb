import { z } from 'zod';

const isoTime = (what: string) => z.iso.datetime({ offset: true, message: `${what}: give an ISO date and time` });

export const AUDIT_PAGE_MAX = 500;

export const auditQuerySchema = z.object({
  /** The person: part of an e-mail address or name, or "system". */
  actor: z.string().trim().max(254).optional(),
  /** The object kind (plan, run, lot, user, …). */
  entity: z.string().trim().max(32).optional(),
  entityId: z.string().trim().max(64).optional(),
  action: z.string().trim().max(64).optional(),
  from: isoTime('From').optional(),
  to: isoTime('To').optional(),
  limit: z.coerce.number().int().min(1).max(AUDIT_PAGE_MAX).default(200),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;

/** The CSV export takes the same filter and up to 50 000 entries. */
export const AUDIT_EXPORT_MAX = 50_000;
export const auditExportQuerySchema = auditQuerySchema.extend({
  limit: z.coerce.number().int().min(1).max(AUDIT_EXPORT_MAX).default(AUDIT_EXPORT_MAX),
});

export interface AuditEntryView {
  id: string;
  at: string;
  actor: string;
  action: string;
  entity: string;
  entityId: string | null;
  reason: string | null;
  details: Record<string, unknown>;
  hash: string | null;
}

export interface AuditPage {
  items: AuditEntryView[];
  /** More entries matched than the page holds. */
  more: boolean;
}

/** What `npm run audit:verify` and GET /api/audit/verify report. */
export interface AuditChainReport {
  ok: boolean;
  checked: number;
  /** The first entry whose stored hash or link does not match, with why. */
  firstBreak: { id: string; problem: string } | null;
}
