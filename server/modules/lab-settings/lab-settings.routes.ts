import { rolesFor } from '../../../shared/domain/permissions';
import { updateLabSettingsSchema } from '../../../shared/schemas/lab-settings';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function labSettingsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.labSettings;
  const r = new ApiRouter('/api/lab-settings');
  r.get('/', { access: 'signed-in' }, () => svc.get());
  r.put('/', { access: rolesFor('lab-settings.manage'), body: updateLabSettingsSchema }, ({ user, body }) => svc.update(user, body));
  return r;
}
