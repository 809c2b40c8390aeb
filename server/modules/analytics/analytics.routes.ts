import { rolesFor } from '../../../shared/domain/permissions';
import { deviceTypeParamsSchema, deviceTypeQuerySchema, lotListQuerySchema, lotParamsSchema } from '../../../shared/schemas/analytics';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function analyticsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.analytics;
  const r = new ApiRouter('/api/analytics');
  const readers = rolesFor('trends.read');

  r.get('/lots', { access: readers, query: lotListQuerySchema }, async ({ query }) => ({ items: await svc.lots(query) }));
  r.get('/lots/:lotId', { access: readers, params: lotParamsSchema }, ({ params }) => svc.lot(params.lotId));
  r.get('/lots/:lotId/forecast', { access: readers, params: lotParamsSchema }, ({ params }) => ctx.services.forecast.lot(params.lotId));

  r.get('/device-types', { access: readers, query: deviceTypeQuerySchema }, async ({ query }) => ({ items: await svc.deviceTypes(query) }));
  r.get('/device-types/:id', { access: readers, params: deviceTypeParamsSchema, query: deviceTypeQuerySchema }, ({ params, query }) =>
    svc.deviceType(params.id, query),
  );
  return r;
}
