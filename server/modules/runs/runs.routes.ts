import { rolesFor } from '../../../shared/domain/permissions';
import {
  abortRunSchema,
  bookRunSchema,
  bookSampleSchema,
  proposalInputSchema,
  runActionSchema,
  runIdParamSchema,
  runListQuerySchema,
  socketLoadSchema,
  timelineQuerySchema,
} from '../../../shared/schemas/runs';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function runsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.runs;
  const r = new ApiRouter('/api/runs');
  // Fixed paths before "/:id".
  r.get('/timeline', { access: 'signed-in', query: timelineQuerySchema }, ({ query }) => svc.timeline(query));
  r.post('/proposals', { access: rolesFor('run.propose'), body: proposalInputSchema }, ({ body }) => svc.propose(body));
  r.post('/samples', { access: rolesFor('run.book'), body: bookSampleSchema, status: 201 }, ({ user, body }) => svc.bookSample(user, body));
  r.get('/', { access: 'signed-in', query: runListQuerySchema }, async ({ query }) => ({ items: await svc.list(query) }));
  r.post('/', { access: rolesFor('run.book'), body: bookRunSchema, status: 201 }, ({ user, body }) => svc.book(user, body));
  r.get('/:id', { access: 'signed-in', params: runIdParamSchema }, ({ params }) => svc.get(params.id));
  r.put('/:id/sockets', { access: rolesFor('run.load'), params: runIdParamSchema, body: socketLoadSchema }, ({ user, params, body }) =>
    svc.loadSockets(user, params.id, body),
  );
  for (const action of ['start', 'pause', 'resume', 'measurements-done'] as const) {
    r.post(
      `/:id/${action}`,
      { access: rolesFor(`run.${action}`), params: runIdParamSchema, body: runActionSchema },
      ({ user, params, body }) => svc.act(user, params.id, action, body),
    );
  }
  r.post('/:id/abort', { access: rolesFor('run.abort'), params: runIdParamSchema, body: abortRunSchema }, ({ user, params, body }) =>
    svc.act(user, params.id, 'abort', body),
  );
  return r;
}
