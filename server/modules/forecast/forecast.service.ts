/**
 * The verdict forecast's server side (issue #25 item 1): a lot's forecast, the back-test, and the
 * alert. Each engineer is told at their own level (account page), or at the lab's level when they set
 * none and their read-point notices are on, or not at all when they turned it off
 * (`effectiveAlertLevel`). After a read-point upload, a lot whose chance of passing falls below an
 * engineer's level is announced to that engineer once (in-app notification and e-mail), and again
 * only after it has risen to or above that level and fallen once more.
 */
import {
  FORECAST_METHOD,
  backtestLot,
  backtestLots,
  effectiveAlertLevel,
  summarise,
  type BacktestLotResult,
} from '../../../shared/forecast';
import { rolesFor } from '../../../shared/domain/permissions';
import { TERMINAL_STATES } from '../../../shared/domain/run-states';
import type { SessionUser } from '../../../shared/schemas/auth';
import type {
  BacktestView,
  ForecastAlertInput,
  ForecastAlertSetting,
  LotForecast,
  MyForecastAlert,
  MyForecastAlertInput,
} from '../../../shared/schemas/forecast';
import type { AppContext } from '../../context';
import { ForecastAlertUserStateEntity } from '../../db/entities';
import { describeErrorForLog } from '../../db/safe-logger';
import type { AnalyticsService } from '../analytics/analytics.service';
import { briefForecast, lotForecast } from '../analytics/lot-forecast';
import {
  alertRecipients,
  deleteOwnLevel,
  findAlertSetting,
  findOwnLevel,
  findUserStates,
  lockLotAlertState,
  lotIdsOfRun,
  notifyReadPointsOf,
  saveAlertSetting,
  saveAlertState,
  saveOwnLevel,
  saveUserStates,
  userName,
} from './forecast.data';

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

  /** The signed-in engineer's own alert: their level, the lab's, or off. */
  async myAlert(user: SessionUser): Promise<MyForecastAlert> {
    const m = this.ctx.ds.manager;
    const [own, lab, notifyReadPoints] = await Promise.all([findOwnLevel(m, user.id), findAlertSetting(m), notifyReadPointsOf(m, user.id)]);
    const mode = own ? (own.below === null ? 'off' : 'own') : 'lab';
    return {
      mode,
      below: own?.below ?? null,
      labBelow: lab.below,
      notifyReadPoints,
      effective: effectiveAlertLevel(own ? { set: true, below: own.below } : { set: false }, lab.below, notifyReadPoints),
      updatedAt: own ? own.updatedAt.toISOString() : null,
    };
  }

  /** Sets the engineer's own level, turns their alert off, or returns them to the lab's level (audited with before and after). */
  async updateMyAlert(actor: SessionUser, input: MyForecastAlertInput): Promise<MyForecastAlert> {
    await this.ctx.ds.transaction(async (m) => {
      const row = await findOwnLevel(m, actor.id, true);
      const before = row ? { mode: row.below === null ? 'off' : 'own', below: row.below } : { mode: 'lab', below: null };
      const after = { mode: input.mode, below: input.mode === 'own' ? input.below : null };
      if (input.mode === 'lab') await deleteOwnLevel(m, actor.id);
      else await saveOwnLevel(m, actor.id, after.below, this.ctx.now());
      await this.ctx.audit.record(
        { actor, action: 'forecast.alert.own.update', entity: 'user', entityId: actor.id, details: { before, after } },
        m,
      );
    });
    return this.myAlert(actor);
  }

  /**
   * After readings of a run were stored: each of its lots' chance of passing against each engineer's level.
   * Never throws: the readings are committed whatever the forecast does.
   */
  async afterReadings(runId: string): Promise<void> {
    try {
      for (const lotId of await lotIdsOfRun(this.ctx.ds.manager, runId)) await this.checkLot(lotId);
    } catch (err) {
      console.error(`forecast alert after readings of run ${runId} failed: ${describeErrorForLog(err)}`);
    }
  }

  private async checkLot(lotId: string): Promise<void> {
    const a = await this.analytics.analysed(lotId);
    const f = briefForecast(a);
    if (f.pPass === null || f.state === 'final') return;
    const pPass = f.pPass;
    const told = await this.ctx.ds.transaction(async (m) => {
      const now = this.ctx.now();
      // The lot's row is the lock: uploads of the same lot take turns, so each crossing is told once.
      const lotState = await lockLotAlertState(m, lotId, now);
      const labBelow = (await findAlertSetting(m)).below;
      const labSide = pPass < labBelow;
      await saveAlertState(
        m,
        Object.assign(lotState, { below: labSide, pPass, changedAt: labSide !== lotState.below ? now : lotState.changedAt }),
      );
      const states = new Map((await findUserStates(m, lotId)).map((s) => [s.userId, s]));
      const out: Array<{ userId: string; level: number; own: boolean }> = [];
      const changed: ForecastAlertUserStateEntity[] = [];
      for (const u of await alertRecipients(m, rolesFor('forecast.alert.own'))) {
        const level = effectiveAlertLevel(u.ownSet ? { set: true, below: u.below } : { set: false }, labBelow, u.notifyReadPoints);
        if (level === null) continue;
        const st = states.get(u.id);
        const was = st?.below ?? false;
        const isBelow = pPass < level;
        if (!st || st.below !== isBelow || st.level !== level) {
          changed.push(
            Object.assign(st ?? new ForecastAlertUserStateEntity(), {
              lotId,
              userId: u.id,
              below: isBelow,
              level,
              changedAt: !st || was !== isBelow ? now : st.changedAt,
            }),
          );
        }
        if (isBelow && !was) out.push({ userId: u.id, level, own: u.ownSet });
      }
      await saveUserStates(m, changed);
      return out;
    });
    // One announcement per level told (the words name it); e-mails go out after the commit.
    const groups = new Map<string, { level: number; own: boolean; userIds: string[] }>();
    for (const t of told) {
      const key = `${t.own}:${t.level}`;
      const g = groups.get(key) ?? { level: t.level, own: t.own, userIds: [] };
      g.userIds.push(t.userId);
      groups.set(key, g);
    }
    const code = a.core.lot.code;
    const at = f.asOfH !== null ? ` after the ${Math.round(f.asOfH)} h read point` : '';
    for (const g of groups.values()) {
      const whose = g.own ? `your alert level of ${pct(g.level)}` : `the lab's alert level of ${pct(g.level)}`;
      const body = `Lot ${code}: the forecast gives it a ${pct(pPass)} chance of passing${at}, below ${whose}. See the lot's trends page for the coming read points.`;
      const why = g.own
        ? 'You get these e-mails because you set your own forecast alert level in your account settings.'
        : 'You get these e-mails because read-point notices are on in your account settings and you follow the lab’s forecast alert level.';
      await this.ctx.services.notifications.announce({
        audience: 'listed',
        userIds: g.userIds,
        kind: 'forecast-below',
        title: `Lot ${code}: chance of passing ${pct(pPass)}`,
        body,
        link: `/trends/lots/${lotId}`,
        subject: `[Emberlot] Lot ${code} forecast: ${pct(pPass)} chance of passing`,
        mailText: `${body}\n\n${FORECAST_METHOD}\n\n${why}`,
      });
    }
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
