/** A socket's identified thermal path for the socket sheet: the run's identifications, baseline and flag. */
import { THERMAL_PATH_RISE_FRACTION, TREND_MIN_FITS } from '../../../shared/thermal/rules';
import type { SocketThermal } from '../../../shared/schemas/thermal';
import type { AppContext } from '../../context';
import { notFound } from '../../http/errors';
import { activeRunOfRig, fitsOfSocket, lastFlagRule, rigByCode, thermalFlagLive } from './thermal.data';

export class ThermalService {
  constructor(private readonly ctx: AppContext) {}

  async socket(code: string, socket: number): Promise<SocketThermal> {
    const rig = await rigByCode(this.ctx.ds, code);
    if (!rig) throw notFound(`Rig ${code}`);
    const run = await activeRunOfRig(this.ctx.ds, rig.id);
    const { fits, baselineThetaCPerW } = await fitsOfSocket(this.ctx.ds, rig.id, run?.id ?? null, socket);
    const good = fits.filter((f) => f.good);
    const flagged = await thermalFlagLive(this.ctx.ds, rig.id, socket);
    const withTrend = fits.filter((f) => f.trend !== null);
    return {
      rigCode: rig.code,
      socketIndex: socket,
      runId: run?.id ?? null,
      runCode: run?.code ?? null,
      baselineThetaCPerW,
      latestGood: good.length ? good[good.length - 1] : null,
      latest: fits.length ? fits[fits.length - 1] : null,
      riseLimitFraction: THERMAL_PATH_RISE_FRACTION,
      flagged,
      flagRule: flagged ? await lastFlagRule(this.ctx.ds, rig.id, run?.id ?? null, socket) : null,
      trend: withTrend.length ? withTrend[withTrend.length - 1].trend : null,
      trendMinFits: TREND_MIN_FITS,
      history: fits,
    };
  }
}
