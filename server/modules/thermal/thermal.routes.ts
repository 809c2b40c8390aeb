import { thermalSocketParamSchema } from '../../../shared/schemas/thermal';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** GET /api/thermal/rigs/:code/sockets/:socket — the socket's identified θ and τ, their quality and history. */
export function thermalRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.thermal;
  const r = new ApiRouter('/api/thermal');
  r.get('/rigs/:code/sockets/:socket', { access: 'signed-in', params: thermalSocketParamSchema }, ({ params }) =>
    svc.socket(params.code, params.socket),
  );
  return r;
}
