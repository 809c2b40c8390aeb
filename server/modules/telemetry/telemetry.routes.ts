import { rejectionsQuerySchema } from '../../../shared/schemas/rigs';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export const TELEMETRY_READERS = ['admin', 'engineer'] as const;

export function telemetryRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.telemetry;
  const r = new ApiRouter('/api/telemetry');
  r.get('/rejections', { access: TELEMETRY_READERS, query: rejectionsQuerySchema }, async ({ query }) => ({ items: await svc.rejections(query) }));
  r.get('/stats', { access: TELEMETRY_READERS }, () => svc.stats());
  return r;
}
