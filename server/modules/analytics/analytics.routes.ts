import { rolesFor } from '../../../shared/domain/permissions';
import { deviceTypeParamsSchema, deviceTypeQuerySchema, lotListQuerySchema, lotParamsSchema } from '../../../shared/schemas/analytics';
import type { AppContext } from '../../context';
import { LotEntity } from '../../db/entities';
import { ApiRouter, HANDLED } from '../../http/route';
import { lotReportCsv, lotReportPdf } from './lot-report';

/** Safe file-name part from a lot code (lot codes are ours, but never trust a header value). */
const fileSafe = (s: string) => s.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, 60);

export function analyticsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.analytics;
  const r = new ApiRouter('/api/analytics');
  const readers = rolesFor('trends.read');

  r.get('/lots', { access: readers, query: lotListQuerySchema }, async ({ query }) => ({ items: await svc.lots(query) }));
  r.get('/lots/:lotId', { access: readers, params: lotParamsSchema }, ({ params }) => svc.lot(params.lotId));

  const report = async (lotId: string) => {
    const detail = await svc.lot(lotId);
    const lot = await ctx.ds.getRepository(LotEntity).findOneByOrFail({ id: lotId });
    return { detail, extra: { notes: lot.notes, generatedAt: ctx.now() } };
  };
  r.get('/lots/:lotId/report.csv', { access: readers, params: lotParamsSchema }, async ({ params, res }) => {
    const { detail, extra } = await report(params.lotId);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="lot-${fileSafe(detail.lotCode)}-report.csv"`);
    res.send(lotReportCsv(detail, extra));
    return HANDLED;
  });
  r.get('/lots/:lotId/report.pdf', { access: readers, params: lotParamsSchema }, async ({ params, res }) => {
    const { detail, extra } = await report(params.lotId);
    const pdf = await lotReportPdf(detail, extra);
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="lot-${fileSafe(detail.lotCode)}-report.pdf"`);
    res.send(pdf);
    return HANDLED;
  });

  r.get('/device-types', { access: readers, query: deviceTypeQuerySchema }, async ({ query }) => ({ items: await svc.deviceTypes(query) }));
  r.get('/device-types/:id', { access: readers, params: deviceTypeParamsSchema, query: deviceTypeQuerySchema }, ({ params, query }) =>
    svc.deviceType(params.id, query),
  );
  return r;
}
