import { rolesFor } from '../../../shared/domain/permissions';
import { acknowledgeAlarmSchema, alarmListQuerySchema, idParamSchema } from '../../../shared/schemas/alarms';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** Alarms: everyone signed in may look; operators, engineers and admins acknowledge. */
export function alarmsRoutes(ctx: AppContext): ApiRouter {
  const svc = () => ctx.services.alarms;
  const r = new ApiRouter('/api/alarms');
  r.get('/', { access: 'signed-in', query: alarmListQuerySchema }, ({ query }) => svc().list(query));
  r.get('/counts', { access: 'signed-in' }, () => svc().counts());
  r.get('/:id', { access: 'signed-in', params: idParamSchema }, ({ params }) => svc().get(params.id));
  r.post(
    '/:id/acknowledge',
    { access: rolesFor('alarm.acknowledge'), params: idParamSchema, body: acknowledgeAlarmSchema },
    ({ user, params, body }) => svc().acknowledge(user, params.id, body),
  );
  return r;
}
