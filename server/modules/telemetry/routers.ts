import type { AppContext } from '../../context';
import type { ApiRouter } from '../../http/route';
import { floorRoutes } from '../floor/floor.routes';
import { rigsRoutes } from '../rigs/rigs.routes';
import { telemetryRoutes } from './telemetry.routes';

/** The rigs admin, live floor and telemetry routers (mounted from server/modules/index.ts). */
export function telemetryRouters(ctx: AppContext): ApiRouter[] {
  return [rigsRoutes(ctx), floorRoutes(ctx), telemetryRoutes(ctx)];
}
