import { rolesFor } from '../../../shared/domain/permissions';
import { auditExportQuerySchema, auditQuerySchema, type AuditEntryView } from '../../../shared/schemas/audit';
import type { AppContext } from '../../context';
import { ApiRouter, HANDLED } from '../../http/route';
import { CsvSheet } from '../reports/csv';

const CSV_HEADER = ['id', 'at', 'actor', 'action', 'object', 'object id', 'reason', 'details', 'hash'];

export function auditCsv(items: AuditEntryView[]): string {
  const s = new CsvSheet().row(CSV_HEADER);
  for (const e of items) s.row([e.id, e.at, e.actor, e.action, e.entity, e.entityId, e.reason, JSON.stringify(e.details), e.hash]);
  return s.text();
}

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
