import { rolesFor } from '../../../shared/domain/permissions';
import { reportLotParamsSchema, reportQuerySchema } from '../../../shared/schemas/reports';
import type { AppContext } from '../../context';
import { ApiRouter, HANDLED } from '../../http/route';

/** Safe file-name part from a lot code (lot codes are ours, but never trust a header value). */
const fileSafe = (s: string) => s.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, 60);

export function reportsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.reports;
  const r = new ApiRouter('/api/reports');
  const params = reportLotParamsSchema;

  r.get('/lots/:lotId/report.pdf', { access: rolesFor('report.lot'), params, query: reportQuerySchema }, async ({ params, query, res }) => {
    const { lotCode, pdf } = await svc.lotReportPdf(params.lotId, query.runId);
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="lot-${fileSafe(lotCode)}-report.pdf"`);
    res.send(pdf);
    return HANDLED;
  });
  r.get('/lots/:lotId/report.csv', { access: rolesFor('report.lot'), params, query: reportQuerySchema }, async ({ params, query, res }) => {
    const { lotCode, csv } = await svc.lotReportCsv(params.lotId, query.runId);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="lot-${fileSafe(lotCode)}-report.csv"`);
    res.send(csv);
    return HANDLED;
  });
  r.get('/lots/:lotId/certificate.pdf', { access: rolesFor('report.certificate'), params }, async ({ params, res }) => {
    const { lotCode, pdf } = await svc.certificate(params.lotId);
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="lot-${fileSafe(lotCode)}-certificate.pdf"`);
    res.send(pdf);
    return HANDLED;
  });
  return r;
}
