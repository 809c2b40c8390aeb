import { rolesFor } from '../../../shared/domain/permissions';
import { tripResetParamSchema, tripResetSchema } from '../../../shared/schemas/protection';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** Live protection's routes: resetting a socket's trip (mounted after the runs router, same prefix). */
export function protectionRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.tripResets;
  const r = new ApiRouter('/api/runs');
  r.post(
    '/:id/sockets/:socket/reset-trip',
    { access: rolesFor('run.reset-trip'), params: tripResetParamSchema, body: tripResetSchema },
    ({ user, params, body }) => svc.reset(user, params.id, params.socket, body),
  );
  return r;
}
