import { rolesFor } from '../../../shared/domain/permissions';
import { utilisationQuerySchema } from '../../../shared/schemas/replan';
import type { AppContext } from '../../context';
import { ApiRouter, HANDLED } from '../../http/route';

/** Rig utilisation per week and request-to-verdict turnaround, as JSON and as CSV. */
export function utilisationRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.utilisation;
  const r = new ApiRouter('/api/utilisation');
  const readers = rolesFor('utilisation.read');
  r.get('/', { access: readers, query: utilisationQuerySchema }, ({ query }) => svc.report(query));
  r.get('/export.csv', { access: readers, query: utilisationQuerySchema }, async ({ query, res }) => {
    const body = await svc.csv(query);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', 'attachment; filename="emberlot-utilisation.csv"');
    res.send(body);
    return HANDLED;
  });
  return r;
}
