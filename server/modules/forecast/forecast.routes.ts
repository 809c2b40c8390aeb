import { rolesFor } from '../../../shared/domain/permissions';
import { forecastAlertSchema, myForecastAlertSchema } from '../../../shared/schemas/forecast';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** The back-test, the lab's alert level and each engineer's own (a lot's own forecast is GET /api/analytics/lots/:lotId/forecast). */
export function forecastRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.forecast;
  const r = new ApiRouter('/api/forecast');
  r.get('/backtest', { access: rolesFor('trends.read') }, () => svc.backtest());
  r.get('/alert', { access: rolesFor('trends.read') }, () => svc.alertSetting());
  r.put('/alert', { access: rolesFor('forecast.alert'), body: forecastAlertSchema }, ({ user, body }) => svc.updateAlert(user, body));
  // Each engineer's own level (or off, or the lab's): the account page.
  r.get('/alert/mine', { access: rolesFor('forecast.alert.own') }, ({ user }) => svc.myAlert(user));
  r.put('/alert/mine', { access: rolesFor('forecast.alert.own'), body: myForecastAlertSchema }, ({ user, body }) =>
    svc.updateMyAlert(user, body),
  );
  return r;
}
