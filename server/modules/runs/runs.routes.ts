import { rolesFor } from '../../../shared/domain/permissions';
import {
  abortRunSchema,
  bookRunSchema,
  bookSampleSchema,
  calendarApplySchema,
  proposalInputSchema,
  retryRunSchema,
  runActionSchema,
  runIdParamSchema,
  runListQuerySchema,
  socketLoadSchema,
  startRunSchema,
  timelineQuerySchema,
} from '../../../shared/schemas/runs';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function runsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.runs;
  const r = new ApiRouter('/api/runs');
  // Fixed paths before "/:id".
  r.get('/timeline', { access: 'signed-in', query: timelineQuerySchema }, ({ query }) => svc.timeline(query));
  r.get('/calendar', { access: rolesFor('run.propose') }, () => svc.calendar());
  r.post('/calendar', { access: rolesFor('run.reschedule'), body: calendarApplySchema }, ({ user, body }) => svc.applyCalendar(user, body));
  r.post('/proposals', { access: rolesFor('run.propose'), body: proposalInputSchema }, ({ body }) => svc.propose(body));
  r.post('/samples', { access: rolesFor('run.book'), body: bookSampleSchema, status: 201 }, ({ user, body }) => svc.bookSample(user, body));
  r.get('/', { access: 'signed-in', query: runListQuerySchema }, async ({ query }) => ({ items: await svc.list(query) }));
  r.post('/', { access: rolesFor('run.book'), body: bookRunSchema, status: 201 }, ({ user, body }) => svc.book(user, body));
  r.get('/:id', { access: 'signed-in', params: runIdParamSchema }, ({ params }) => svc.get(params.id));
  r.put('/:id/sockets', { access: rolesFor('run.load'), params: runIdParamSchema, body: socketLoadSchema }, ({ user, params, body }) =>
    svc.loadSockets(user, params.id, body),
  );
  // The start permit (every check Start makes) and Start itself, which needs the confirmation.
  r.get('/:id/permit', { access: 'signed-in', params: runIdParamSchema }, ({ params }) => svc.permit(params.id));
  r.post('/:id/start', { access: rolesFor('run.start'), params: runIdParamSchema, body: startRunSchema }, ({ user, params, body }) =>
    svc.act(user, params.id, 'start', body),
  );
  // Out of the fault state once the cause is fixed (what was fixed is audited).
  r.post('/:id/retry', { access: rolesFor('run.retry'), params: runIdParamSchema, body: retryRunSchema }, ({ user, params, body }) =>
    svc.act(user, params.id, 'retry', body),
  );
  for (const action of ['pause', 'resume', 'measurements-done'] as const) {
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
