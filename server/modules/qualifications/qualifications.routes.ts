import { rolesFor } from '../../../shared/domain/permissions';
import {
  createQualificationSchema,
  externalResultSchema,
  qualificationCellParamsSchema,
  qualificationParamsSchema,
  updateCellSchema,
  waiveCellSchema,
  withdrawCellSchema,
} from '../../../shared/schemas/qualifications';
import type { AppContext } from '../../context';
import { ApiRouter, HANDLED } from '../../http/route';
import type { LotReportData } from '../reports/report-data';
import type { QualificationReportData } from './qualifications.service';
import { qualificationReportCsv, qualificationReportPdf } from './qualification-report';

/**
 * The lot report's data (server/modules/reports) of each lot with runs, in the qualification's lot
 * order, its drift charts drawn per cell (each cell's judged runs) instead of the lot's latest run.
 */
async function lotReports(ctx: AppContext, data: QualificationReportData): Promise<LotReportData[]> {
  const out: LotReportData[] = [];
  for (const l of data.detail.lots) {
    if (!data.lots.has(l.id)) continue;
    const lot = await ctx.services.reports.lotReportData(l.id);
    const charts = await ctx.services.qualifications.cellCharts(data, l.id);
    out.push(charts.length ? { ...lot, run: null, charts } : lot);
  }
  return out;
}

const fileSafe = (s: string) => s.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, 60);

/** Qualifications: engineers build and edit; engineers, managers and admins read and download. */
export function qualificationsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.qualifications;
  const r = new ApiRouter('/api/qualifications');
  const readers = rolesFor('qualification.read');
  const editors = rolesFor('qualification.edit');

  r.get('/templates', { access: readers }, () => ({ items: svc.templates() }));
  r.get('/', { access: readers }, async () => ({ items: await svc.list() }));
  r.post('/', { access: editors, body: createQualificationSchema, status: 201 }, ({ user, body }) => svc.create(user, body));
  r.get('/:id', { access: readers, params: qualificationParamsSchema }, ({ params }) => svc.detail(params.id));
  r.patch(
    '/:id/cells/:cellId',
    { access: editors, params: qualificationCellParamsSchema, body: updateCellSchema },
    ({ user, params, body }) => svc.updateCell(user, params.id, params.cellId, body),
  );
  r.post(
    '/:id/cells/:cellId/waiver',
    { access: editors, params: qualificationCellParamsSchema, body: waiveCellSchema },
    ({ user, params, body }) => svc.waive(user, params.id, params.cellId, body),
  );
  r.post(
    '/:id/cells/:cellId/external',
    { access: editors, params: qualificationCellParamsSchema, body: externalResultSchema },
    ({ user, params, body }) => svc.recordExternal(user, params.id, params.cellId, body),
  );
  r.post(
    '/:id/cells/:cellId/withdraw',
    { access: rolesFor('qualification.withdraw'), params: qualificationCellParamsSchema, body: withdrawCellSchema },
    ({ user, params, body }) => svc.withdraw(user, params.id, params.cellId, body),
  );
  r.get('/:id/cells/:cellId/drift', { access: readers, params: qualificationCellParamsSchema }, ({ params }) =>
    svc.cellDrift(params.id, params.cellId),
  );
  r.get('/:id/report.csv', { access: readers, params: qualificationParamsSchema }, async ({ params, res }) => {
    const data = await svc.reportData(params.id);
    const signatures = await lotReports(ctx, data);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="qualification-${fileSafe(data.detail.code)}-report.csv"`);
    res.send(qualificationReportCsv(data, signatures, ctx.now()));
    return HANDLED;
  });
  r.get('/:id/report.pdf', { access: readers, params: qualificationParamsSchema }, async ({ params, res }) => {
    const data = await svc.reportData(params.id);
    const signatures = await lotReports(ctx, data);
    const pdf = await qualificationReportPdf(data, signatures, ctx.now());
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="qualification-${fileSafe(data.detail.code)}-report.pdf"`);
    res.send(pdf);
    return HANDLED;
  });
  return r;
}
