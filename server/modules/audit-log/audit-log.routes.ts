import { rolesFor } from '../../../shared/domain/permissions';
import { auditExportQuerySchema, auditQuerySchema, type AuditEntryView } from '../../../shared/schemas/audit';
import type { AppContext } from '../../context';
import { ApiRouter, HANDLED } from '../../http/route';
import { csvLine } from '../reports/csv';

const CSV_HEADER = ['id', 'at', 'actor', 'action', 'object', 'object id', 'reason', 'details', 'hash'];

export const auditCsv = (items: AuditEntryView[]): string =>
  [
    csvLine(CSV_HEADER),
    ...items.map((e) => csvLine([e.id, e.at, e.actor, e.action, e.entity, e.entityId, e.reason, JSON.stringify(e.details), e.hash])),
  ].join('\r\n') + '\r\n';

/** (A module of its own: audit/ is imported by every module, and the CSV rule lives in analytics.) The audit log for admins and managers: filter by person, object and time; CSV export; the chain check. */
export function auditRoutes(ctx: AppContext): ApiRouter {
  const r = new ApiRouter('/api/audit');
  const readers = rolesFor('audit.read');
  r.get('/', { access: readers, query: auditQuerySchema }, ({ query }) => ctx.audit.list(query));
  r.get('/export.csv', { access: readers, query: auditExportQuerySchema }, async ({ query, res }) => {
    const page = await ctx.audit.list(query);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', 'attachment; filename="emberlot-audit.csv"');
    res.send(auditCsv(page.items));
    return HANDLED;
  });
  r.get('/verify', { access: readers }, () => ctx.audit.verify());
  return r;
}
