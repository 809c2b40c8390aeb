import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';
import { pingDatabase } from './health.data';
import { leadershipReport } from '../../cluster/leadership';
import { pgPoolOf } from '../../db/pool';

export function healthRoutes(ctx: AppContext): ApiRouter {
  const r = new ApiRouter('/api/health');
  r.get('/', { access: 'public' }, async () => {
    const started = Date.now();
    await pingDatabase(ctx.ds);
    const dbMs = Date.now() - started;
    // Which process runs the workers (ingest, protection, scheduler) and since when (server/cluster/).
    const workers = await leadershipReport(pgPoolOf(ctx), ctx.services.leadership?.status() ?? null);
    return { ok: true, db: 'up', dbMs, time: ctx.now().toISOString(), workers };
  });
  return r;
}
