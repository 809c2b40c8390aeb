import { rolesFor } from '../../../shared/domain/permissions';
import { deviceHistoryParamsSchema } from '../../../shared/schemas/device-history';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function deviceHistoryRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.deviceHistory;
  const r = new ApiRouter('/api/devices');
  r.get('/:deviceId/history', { access: rolesFor('measurement.read'), params: deviceHistoryParamsSchema }, ({ params }) =>
    svc.history(params.deviceId),
  );
  return r;
}
