/** The routers of alarms, notifications and the mail log (mounted from server/modules/index.ts). */
import type { AppContext } from '../../context';
import type { ApiRouter } from '../../http/route';
import { mailRoutes } from '../mail/mail.routes';
import { notificationsRoutes } from '../notifications/notifications.routes';
import { alarmsRoutes } from './alarms.routes';

export function alarmRouters(ctx: AppContext): ApiRouter[] {
  return [alarmsRoutes(ctx), notificationsRoutes(ctx), mailRoutes(ctx)];
}
