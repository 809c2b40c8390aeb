import { rolesFor } from '../../../shared/domain/permissions';
import { deviceTypeCreateSchema, deviceTypeListQuerySchema, deviceTypePatchSchema } from '../../../shared/schemas/devices';
import { idParamSchema } from '../../../shared/schemas/users';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';
import type { DeviceTypesService } from './device-types.service';

export function deviceTypesRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.deviceTypes;
  const r = new ApiRouter('/api/device-types');
  r.get('/', { access: 'signed-in', query: deviceTypeListQuerySchema }, async ({ query }) => ({ items: await svc.list(query.q) }));
  r.get('/:id', { access: 'signed-in', params: idParamSchema }, ({ params }) => svc.get(params.id));
  r.post('/', { access: rolesFor('deviceType.edit'), body: deviceTypeCreateSchema, status: 201 }, ({ user, body }) =>
    svc.create(user, body),
  );
  r.put('/:id', { access: rolesFor('deviceType.edit'), params: idParamSchema, body: deviceTypeCreateSchema }, ({ user, params, body }) =>
    svc.update(user, params.id, body, 'replace'),
  );
  r.patch('/:id', { access: rolesFor('deviceType.edit'), params: idParamSchema, body: deviceTypePatchSchema }, ({ user, params, body }) =>
    svc.update(user, params.id, body as Parameters<DeviceTypesService['update']>[2], 'patch'),
  );
  return r;
}
