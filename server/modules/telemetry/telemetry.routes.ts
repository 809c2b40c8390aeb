import { rolesFor } from '../../../shared/domain/permissions';
import { rejectionsQuerySchema } from '../../../shared/schemas/rigs';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function telemetryRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.telemetry;
  const r = new ApiRouter('/api/telemetry');
  r.get('/rejections', { access: rolesFor('telemetry.inspect'), query: rejectionsQuerySchema }, async ({ query }) => ({
    items: await svc.rejections(query),
  }));
  r.get('/stats', { access: rolesFor('telemetry.inspect') }, () => svc.stats());
  return r;
}
