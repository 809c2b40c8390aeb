import { rolesFor } from '../../../shared/domain/permissions';
import { overrideDecisionSchema, overrideListQuerySchema, overrideRequestInputSchema } from '../../../shared/schemas/approvals';
import { idParamSchema } from '../../../shared/schemas/users';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** Override requests: engineers ask, a second person holding the safety-approval grant decides. */
export function approvalsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.approvals;
  const r = new ApiRouter('/api/override-requests');
  const deciders = rolesFor('override.decide');
  // `canDecide`: whether the reader holds the safety-approval grant (the screen shows the buttons).
  r.get('/', { access: deciders, query: overrideListQuerySchema }, async ({ user, query }) => ({
    items: await svc.list(query),
    canDecide: await svc.holdsGrant(user),
  }));
  r.post('/', { access: rolesFor('override.request'), body: overrideRequestInputSchema, status: 201 }, ({ user, body }) =>
    svc.request(user, body),
  );
  r.get('/:id', { access: deciders, params: idParamSchema }, ({ params }) => svc.get(params.id));
  r.post('/:id/decision', { access: deciders, params: idParamSchema, body: overrideDecisionSchema }, ({ user, params, body }) =>
    svc.decide(user, params.id, body),
  );
  return r;
}
