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
import { alarmsRoutes } from './alarms/alarms.routes';
import { notificationsRoutes } from './notifications/notifications.routes';
import { mailRoutes } from './mail/mail.routes';
import { rigsRoutes } from './rigs/rigs.routes';
import { floorRoutes } from './floor/floor.routes';
import { telemetryRoutes } from './telemetry/telemetry.routes';
import { runsRoutes } from './runs/runs.routes';
import { evidenceRoutes } from './evidence/evidence.routes';
import { protectionRoutes } from './protection/protection.routes';
import { approvalsRoutes } from './approvals/approvals.routes';
import { signoffRoutes } from './signoff/signoff.routes';
import { auditRoutes } from './audit-log/audit-log.routes';
import { labSettingsRoutes } from './lab-settings/lab-settings.routes';
import { reportsRoutes } from './reports/reports.routes';
import { deviceHistoryRoutes } from './device-history/device-history.routes';
import { replanRoutes } from './replan/replan.routes';
import { utilisationRoutes } from './utilisation/utilisation.routes';
import { qualificationsRoutes } from './qualifications/qualifications.routes';
import { makeUpRoutes } from './make-up/make-up.routes';
import { forecastRoutes } from './forecast/forecast.routes';
import { thermalRoutes } from './thermal/thermal.routes';

/** Every module's router, in mount order (each module exports its own). Add a feature's router here (one line). */
export const MODULE_ROUTERS: ReadonlyArray<(ctx: AppContext) => ApiRouter> = [
  healthRoutes,
  authRoutes,
  usersRoutes,
  deviceTypesRoutes,
  lotsRoutes,
  plansRoutes,
  measurementsRoutes,
  analyticsRoutes,
  alarmsRoutes,
  notificationsRoutes,
  mailRoutes,
  rigsRoutes,
  floorRoutes,
  telemetryRoutes,
  runsRoutes,
  evidenceRoutes,
  protectionRoutes,
  approvalsRoutes,
  signoffRoutes,
  auditRoutes,
  labSettingsRoutes,
  reportsRoutes,
  deviceHistoryRoutes,
  replanRoutes,
  utilisationRoutes,
  qualificationsRoutes,
  makeUpRoutes,
  forecastRoutes,
  thermalRoutes,
];

export function apiRouters(ctx: AppContext): ApiRouter[] {
  return MODULE_ROUTERS.map((routes) => routes(ctx));
}
