import { rolesFor } from '../../../shared/domain/permissions';
import { acceptReplanSchema, replanIdParamSchema, replanListQuerySchema } from '../../../shared/schemas/replan';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** Re-plan proposals after a rig drops out: the list, and accepting one (engineer or manager, audited). */
export function replanRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.replan;
  const r = new ApiRouter('/api/replan');
  r.get('/', { access: rolesFor('replan.read'), query: replanListQuerySchema }, ({ query }) => svc.list(query.state));
  r.post(
    '/:id/accept',
    { access: rolesFor('replan.accept'), params: replanIdParamSchema, body: acceptReplanSchema },
    ({ user, params, body }) => svc.accept(user, params.id, body.note),
  );
  return r;
}
