import type { AppContext } from '../context';
import type { ApiRouter } from '../http/route';
import { authRoutes } from './auth/auth.routes';
import { healthRoutes } from './health/health.routes';
import { usersRoutes } from './users/users.routes';
import { deviceTypesRoutes } from './device-types/device-types.routes';
import { lotsRoutes } from './lots/lots.routes';
import { plansRoutes } from './plans/plans.routes';
import { measurementsRoutes } from './measurements/measurements.routes';
import { analyticsRoutes } from './analytics/analytics.routes';
import { telemetryRouters } from './telemetry/routers';
import { alarmRouters } from './alarms';
import { runsRoutes } from './runs/runs.routes';
import { evidenceRoutes } from './evidence/evidence.routes';

/** Every API router, in mount order. Add a feature's router here (one line). */
export function apiRouters(ctx: AppContext): ApiRouter[] {
  return [healthRoutes(ctx), authRoutes(ctx), usersRoutes(ctx), deviceTypesRoutes(ctx), lotsRoutes(ctx), plansRoutes(ctx), measurementsRoutes(ctx), analyticsRoutes(ctx), ...alarmRouters(ctx), ...telemetryRouters(ctx), runsRoutes(ctx), evidenceRoutes(ctx)];
}
