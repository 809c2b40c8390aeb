import { rolesFor } from '../../../shared/domain/permissions';
import { makeUpBookSchema } from '../../../shared/schemas/make-up';
import { runIdParamSchema } from '../../../shared/schemas/runs';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** A run's make-up proposal (anyone signed in reads it) and booking it in one step (who may book runs). */
export function makeUpRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.makeUp;
  const r = new ApiRouter('/api/runs');
  r.get('/:id/make-up', { access: 'signed-in', params: runIdParamSchema }, ({ params }) => svc.proposal(params.id));
  r.post(
    '/:id/make-up',
    { access: rolesFor('run.book'), params: runIdParamSchema, body: makeUpBookSchema, status: 201 },
    ({ user, params, body }) => svc.book(user, params.id, body),
  );
  return r;
}
