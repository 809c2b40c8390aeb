import { rolesFor } from '../../../shared/domain/permissions';
import { createUserSchema, idParamSchema, updateUserSchema } from '../../../shared/schemas/users';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function usersRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.users;
  const r = new ApiRouter('/api/users');
  r.get('/', { access: rolesFor('user.manage') }, async () => ({ items: await svc.list() }));
  r.post('/', { access: rolesFor('user.manage'), body: createUserSchema, status: 201 }, ({ user, body }) => svc.create(user, body));
  // Everyone signed in reaches the service, which admits admins and self-edits of notification settings.
  r.patch('/:id', { access: 'signed-in', params: idParamSchema, body: updateUserSchema }, ({ user, params, body }) =>
    svc.update(user, params.id, body),
  );
  return r;
}
