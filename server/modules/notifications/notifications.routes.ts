import { idParamSchema, notificationListQuerySchema } from '../../../shared/schemas/alarms';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** The signed-in person's own notifications. */
export function notificationsRoutes(ctx: AppContext): ApiRouter {
  const svc = () => ctx.services.notifications;
  const r = new ApiRouter('/api/notifications');
  r.get('/', { access: 'signed-in', query: notificationListQuerySchema }, ({ user, query }) => svc().list(user, query));
  r.post('/read-all', { access: 'signed-in' }, ({ user }) => svc().markAllRead(user));
  r.post('/:id/read', { access: 'signed-in', params: idParamSchema }, ({ user, params }) => svc().markRead(user, params.id));
  return r;
}
