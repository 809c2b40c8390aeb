import { rolesFor } from '../../../shared/domain/permissions';
import { mailListQuerySchema } from '../../../shared/schemas/alarms';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** The mail log: every e-mail Emberlot sent or failed to send (admin). */
export function mailRoutes(ctx: AppContext): ApiRouter {
  const r = new ApiRouter('/api/mail');
  r.get('/', { access: rolesFor('mail.read'), query: mailListQuerySchema }, ({ query }) => ctx.services.mail.list(query));
  return r;
}
