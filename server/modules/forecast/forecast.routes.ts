import { rolesFor } from '../../../shared/domain/permissions';
import { forecastAlertSchema } from '../../../shared/schemas/forecast';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** The back-test and the alert threshold (a lot's own forecast is GET /api/analytics/lots/:lotId/forecast). */
export function forecastRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.forecast;
  const r = new ApiRouter('/api/forecast');
  r.get('/backtest', { access: rolesFor('trends.read') }, () => svc.backtest());
  r.get('/alert', { access: rolesFor('trends.read') }, () => svc.alertSetting());
  r.put('/alert', { access: rolesFor('forecast.alert'), body: forecastAlertSchema }, ({ user, body }) => svc.updateAlert(user, body));
  return r;
}
