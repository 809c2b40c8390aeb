/**
 * The verdict forecast's server side (issue #25 item 1): a lot's forecast, the back-test, and the
 * alert — engineers set one threshold for the lab; after a read-point upload, a lot whose chance of
 * passing falls below it is announced once (in-app notification and e-mail to engineers with
 * read-point notices on), and again only after it has risen to or above the threshold and fallen
 * once more.
 */
import { FORECAST_METHOD, backtestLot, backtestLots, summarise, type BacktestLotResult } from '../../../shared/forecast';
import { TERMINAL_STATES } from '../../../shared/domain/run-states';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { BacktestView, ForecastAlertInput, ForecastAlertSetting, LotForecast } from '../../../shared/schemas/forecast';
import type { AppContext } from '../../context';
import { ForecastAlertStateEntity } from '../../db/entities';
import { describeErrorForLog } from '../../db/safe-logger';
import type { AnalyticsService } from '../analytics/analytics.service';
import { briefForecast, lotForecast } from '../analytics/lot-forecast';
import { findAlertSetting, findAlertState, lotIdsOfRun, saveAlertSetting, saveAlertState, userName } from './forecast.data';

/**
 * Generated lots (seeded, known outcome) the back-test adds to the database's finished lots, and the
 * simulations per forecast there: kept small because the API computes it (a few seconds on a busy
 * 2-core machine); `npm run backtest` runs the larger generated set.
 */
export const BACKTEST_GENERATED_LOTS = 12;
export const BACKTEST_SIMULATIONS = 300;

const pct = (p: number) => `${Math.round(p * 100)} %`;

export class ForecastService {
  private backtestMemo: { key: string; results: Promise<BacktestLotResult[]> } | null = null;
  private generated: Promise<BacktestLotResult[]> | null = null;

  constructor(
    private readonly ctx: AppContext,
    private readonly analytics: AnalyticsService,
  ) {}

  async lot(lotId: string): Promise<LotForecast> {
    return lotForecast(await this.analytics.analysed(lotId));
  }

  async alertSetting(): Promise<ForecastAlertSetting> {
    const m = this.ctx.ds.manager;
    const row = await findAlertSetting(m);
    return {
      below: row.below,
      updatedAt: row.updatedAt ? row.updatedAt.toISOString() : null,
      updatedByName: await userName(m, row.updatedById),
    };
  }

  async updateAlert(actor: SessionUser, input: ForecastAlertInput): Promise<ForecastAlertSetting> {
    await this.ctx.ds.transaction(async (m) => {
      const row = await findAlertSetting(m, true);
      const before = { below: row.below };
      Object.assign(row, { below: input.below, updatedAt: this.ctx.now(), updatedById: actor.id });
      await saveAlertSetting(m, row);
      await this.ctx.audit.record(
        {
          actor,
          action: 'forecast.alert.update',
          entity: 'forecast-alert',
          entityId: null,
          reason: input.reason,
          details: { before, after: { below: input.below } },
        },
        m,
      );
    });
    return this.alertSetting();
  }

  /**
   * After readings of a run were stored: each of its lots' chance of passing against the threshold.
   * Never throws: the readings are committed whatever the forecast does.
   */
  async afterReadings(runId: string): Promise<void> {
    try {
      const m = this.ctx.ds.manager;
      const setting = await findAlertSetting(m);
      for (const lotId of await lotIdsOfRun(m, runId)) await this.checkLot(lotId, setting.below);
    } catch (err) {
      console.error(`forecast alert after readings of run ${runId} failed: ${describeErrorForLog(err)}`);
    }
  }

  private async checkLot(lotId: string, below: number): Promise<void> {
    const a = await this.analytics.analysed(lotId);
    const f = briefForecast(a);
    if (f.pPass === null || f.state === 'final') return;
    const m = this.ctx.ds.manager;
    const state = await findAlertState(m, lotId);
    const isBelow = f.pPass < below;
    const wasBelow = state?.below ?? false;
    await saveAlertState(
      m,
      Object.assign(state ?? new ForecastAlertStateEntity(), {
        lotId,
        below: isBelow,
        pPass: f.pPass,
        changedAt: isBelow !== wasBelow || !state ? this.ctx.now() : state.changedAt,
      }),
    );
    if (!isBelow || wasBelow) return;
    const code = a.core.lot.code;
    const at = f.asOfH !== null ? ` after the ${Math.round(f.asOfH)} h read point` : '';
    const body = `Lot ${code}: the forecast gives it a ${pct(f.pPass)} chance of passing${at}, below the lab's alert level of ${pct(below)}. See the lot's trends page for the coming read points.`;
    await this.ctx.services.notifications.announce({
      audience: 'read-points',
      roles: ['engineer'],
      kind: 'forecast-below',
      title: `Lot ${code}: chance of passing ${pct(f.pPass)}`,
      body,
      link: `/trends/lots/${lotId}`,
      subject: `[Emberlot] Lot ${code} forecast: ${pct(f.pPass)} chance of passing`,
      mailText: `${body}\n\n${FORECAST_METHOD}\n\nYou get these e-mails because read-point notices are on in your account settings.`,
    });
  }

  /**
   * The back-test over the database's finished lots (again when one of them changes) and
   * BACKTEST_GENERATED_LOTS generated ones (once per process). A lot at a time, yielding between
   * lots, so other requests are served meanwhile; concurrent callers share the work.
   */
  async backtest(): Promise<BacktestView> {
    const all = await this.analytics.allAnalysed();
    const ended = (state: string) => (TERMINAL_STATES as readonly string[]).includes(state);
    const finished = all.filter((a) => a.judgement.plans.some((p) => p.runs.length > 0 && p.runs.every((r) => ended(r.state))));
    const key = finished.map((a) => `${a.core.lot.id}:${a.verdict}:${a.judgement.plans.map((p) => p.latestH).join('/')}`).join(',');
    if (this.backtestMemo?.key !== key) {
      const results = inTurns(finished, (a) => backtestLot(a.evidence, a.peers, { simulations: BACKTEST_SIMULATIONS }));
      this.backtestMemo = { key, results };
      results.catch(() => {
        if (this.backtestMemo?.results === results) this.backtestMemo = null;
      });
    }
    this.generated ??= inTurns(backtestLots(BACKTEST_GENERATED_LOTS), (g) =>
      backtestLot(g.evidence, [], { simulations: BACKTEST_SIMULATIONS }),
    );
    const [fromDb, generated] = await Promise.all([this.backtestMemo.results, this.generated]);
    return {
      ...summarise([...fromDb, ...generated]),
      sources: { databaseLots: finished.length, generatedLots: BACKTEST_GENERATED_LOTS, simulations: BACKTEST_SIMULATIONS },
      method: FORECAST_METHOD,
    };
  }
}

/** f over the items one at a time, giving the event loop a turn after each. */
async function inTurns<T, R>(items: T[], f: (x: T) => R[]): Promise<R[]> {
  const out: R[] = [];
  for (const x of items) {
    out.push(...f(x));
    await new Promise<void>((resolve) => setImmediate(resolve));
  }
  return out;
}
