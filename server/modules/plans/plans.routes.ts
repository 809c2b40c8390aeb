import { rolesFor } from '../../../shared/domain/permissions';
import { planInputSchema, planListQuerySchema, planTemplatesQuerySchema } from '../../../shared/schemas/plans';
import { idParamSchema } from '../../../shared/schemas/users';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function plansRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.plans;
  const r = new ApiRouter('/api/plans');
  // Fixed paths before "/:id".
  r.get('/templates', { access: 'signed-in', query: planTemplatesQuerySchema }, async ({ query }) => ({
    items: await svc.templates(query.deviceTypeId),
  }));
  r.post('/check', { access: rolesFor('plan.check'), body: planInputSchema }, ({ body }) => svc.check(body));
  r.get('/', { access: 'signed-in', query: planListQuerySchema }, async ({ query }) => ({ items: await svc.list(query) }));
  r.get('/:id', { access: 'signed-in', params: idParamSchema }, ({ params }) => svc.get(params.id));
  r.post('/', { access: rolesFor('plan.edit'), body: planInputSchema, status: 201 }, ({ user, body }) => svc.create(user, body));
  // Edit = a new version of the plan whose current version is :id.
  r.post(
    '/:id/versions',
    { access: rolesFor('plan.edit'), params: idParamSchema, body: planInputSchema, status: 201 },
    ({ user, params, body }) => svc.newVersion(user, params.id, body),
  );
  return r;
}
