import { rolesFor } from '../../../shared/domain/permissions';
import { signoffLotParamsSchema, signVerdictSchema } from '../../../shared/schemas/signoff';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** Lot-verdict signatures: read by whoever reads trends; signed by engineers and managers (password re-entered). */
export function signoffRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.signoff;
  const r = new ApiRouter('/api/signoff');
  r.get('/lots/:lotId', { access: rolesFor('trends.read'), params: signoffLotParamsSchema }, ({ params }) => svc.forLot(params.lotId));
  r.post(
    '/lots/:lotId',
    { access: rolesFor('verdict.sign'), params: signoffLotParamsSchema, body: signVerdictSchema, status: 201 },
    ({ user, params, body }) => svc.sign(user, params.lotId, body),
  );
  return r;
}
