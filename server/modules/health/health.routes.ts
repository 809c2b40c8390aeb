import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';
import { pingDatabase } from './health.data';

export function healthRoutes(ctx: AppContext): ApiRouter {
  const r = new ApiRouter('/api/health');
  r.get('/', { access: 'public' }, async () => {
    const started = Date.now();
    await pingDatabase(ctx.ds);
    return { ok: true, db: 'up', dbMs: Date.now() - started, time: ctx.now().toISOString() };
  });
  return r;
}
