import type { AppContext } from '../context';
import type { ApiRouter } from '../http/route';
import { authRoutes } from './auth/auth.routes';
import { healthRoutes } from './health/health.routes';
import { usersRoutes } from './users/users.routes';

/** Every API router, in mount order. Add a feature's router here (one line). */
export function apiRouters(ctx: AppContext): ApiRouter[] {
  return [healthRoutes(ctx), authRoutes(ctx), usersRoutes(ctx)];
}
