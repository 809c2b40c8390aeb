import { floorChartQuerySchema, floorRigParamSchema } from '../../../shared/schemas/floor';
import type { AppContext } from '../../context';
import { badRequest } from '../../http/errors';
import { ApiRouter, HANDLED } from '../../http/route';

export function floorRoutes(ctx: AppContext): ApiRouter {
  const { floor: svc, floorStream: stream } = ctx.services;
  const r = new ApiRouter('/api/floor');
  r.get('/', { access: 'signed-in' }, async () => ({ items: await svc.tiles() }));
  // Server-sent events: `event: tile` with a whole tile whenever a rig changed (≤ 1 per rig per s).
  r.get('/stream', { access: 'signed-in' }, ({ req, res, user }) => {
    if (!String(req.headers.accept ?? '').includes('text/event-stream')) {
      throw badRequest('This address is a live event stream; open it with an EventSource (Accept: text/event-stream).');
    }
    stream.add(res, { sid: req.sessionID, userId: user.id });
    return HANDLED;
  });
  r.get('/rigs/:code', { access: 'signed-in', params: floorRigParamSchema }, ({ params }) => svc.board(params.code));
  r.get('/rigs/:code/chart', { access: 'signed-in', params: floorRigParamSchema, query: floorChartQuerySchema }, ({ params, query }) =>
    svc.chart(params.code, query),
  );
  return r;
}
