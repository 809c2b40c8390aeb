/**
 * The socket thermal model, live (issue #25 item 2): consumes TELEMETRY_LANDED, keeps one
 * SocketThermalTrack (shared/thermal/track.ts) per socket of the rig's active run, stores each
 * identification in socket_thermal_fits (every step's, and periodic ones when θ moved by
 * STORE_CHANGE_FRACTION or STORE_EVERY_MS passed, and each that joined the trend's series), raises a
 * 'thermal-path' alarm when a socket's θ has risen past its run's first identification by
 * THERMAL_PATH_RISE_FRACTION (step rule) or is rising significantly towards it (trend rule,
 * shared/thermal/rules.ts; the alarm's words name the rule), and gives live
 * protection the latest good θca (`identifiedThetaCa`). Messages of one rig are handled in order.
 *
 * A software flag is no substitute for the rig's hardware interlocks.
 */
import { FLAG_BIAS_ON, FLAG_TRIPPED } from '../../../shared/mqtt/payloads';
import {
  SocketThermalTrack,
  THERMAL_PATH_RISE_FRACTION,
  TREND_INTERVAL_CONFIDENCE,
  type ThermalTrend,
  type TrackEvent,
  type TrackOptions,
} from '../../../shared/thermal';
import type { AppContext } from '../../context';
import { describeErrorForLog } from '../../db/safe-logger';
import { RUN_EVENT, TELEMETRY_LANDED, type RunEvent, type TelemetryLanded } from '../../events';
import type { RaiseAlarmInput } from '../alarms/alarms.service';
import { activeRunOfRig, baselinesOfRun, insertFit, trendFitsOfRun } from './thermal.data';

/** A periodic identification is stored when θ moved by this fraction since the last one stored … */
const STORE_CHANGE_FRACTION = 0.05;
/** … or this long (wall ms) has passed. */
const STORE_EVERY_MS = 60_000;
const RUN_CACHE_MS = 15_000;

interface SocketSlot {
  track: SocketThermalTrack;
  lastStoredTheta: number | null;
  lastStoredAt: number;
  baselineStored: boolean;
}

interface RigSlot {
  runId: string | null;
  runCode: string | null;
  /** Stress hours left in the run's plan (the trend rule's horizon), null when unknown. */
  remainingH: number | null;
  at: number;
  sockets: Map<number, SocketSlot>;
  baselines: Map<number, number>;
  /** The trend's stored points per socket, read once when the run is first seen (a restart keeps the series). */
  trendPoints: Map<number, Array<{ tH: number; thetaCPerW: number; windowH: number }>>;
}

export class ThermalTracker {
  private readonly rigs = new Map<string, RigSlot>();
  private readonly chains = new Map<string, Promise<void>>();
  private readonly listeners: Array<() => void> = [];
  readonly stats = { messages: 0, fits: 0, stored: 0, flags: 0, errors: 0 };
  private queued = 0;

  constructor(
    private readonly ctx: AppContext,
    private readonly trackOptions: Partial<TrackOptions> = {},
  ) {}

  start(): void {
    const onLanded = (m: TelemetryLanded) => this.enqueue(m.rigId, () => this.onTelemetry(m));
    const onRun = (e: RunEvent) => {
      const rigId = (e as { rigId?: unknown } | null)?.rigId;
      if (typeof rigId !== 'string') return;
      const slot = this.rigs.get(rigId);
      if (slot) slot.at = 0; // re-read the run on the next message
      // A run that ended leaves no socket to watch: its thermal flags' condition is over (they stay until acknowledged).
      if (e?.type === 'state-changed' && (e.to === 'finished' || e.to === 'aborted')) this.enqueue(rigId, () => this.clearRig(rigId, e.to));
    };
    this.ctx.events.on(TELEMETRY_LANDED, onLanded);
    this.ctx.events.on(RUN_EVENT, onRun);
    this.listeners.push(
      () => this.ctx.events.off(TELEMETRY_LANDED, onLanded),
      () => this.ctx.events.off(RUN_EVENT, onRun),
    );
  }

  async stop(): Promise<void> {
    for (const off of this.listeners.splice(0)) off();
    await this.idle();
  }

  /** Messages and run events taken and not yet handled, over all rigs. */
  get backlog(): number {
    return this.queued;
  }

  async idle(): Promise<void> {
    while (this.chains.size > 0) await Promise.allSettled([...this.chains.values()]);
  }

  /** The socket's latest good identified θca in the rig's current run (°C/W), or null. */
  identifiedThetaCa(rigId: string, socket: number): number | null {
    return this.rigs.get(rigId)?.sockets.get(socket)?.track.latestGood?.thetaCPerW ?? null;
  }

  private async clearRig(rigId: string, runState: string): Promise<void> {
    this.rigs.delete(rigId);
    // From the alarms themselves, so a flag raised before a server restart is cleared too.
    const live = await this.ctx.services.alarms.activeKeys(['thermal-path']);
    for (const a of live) {
      if (a.rigId === rigId) await this.ctx.services.alarms.clear('thermal-path', rigId, a.socketIndex, { runState });
    }
  }

  private enqueue(rigId: string, job: () => Promise<void>): void {
    const prev = this.chains.get(rigId) ?? Promise.resolve();
    this.queued++;
    const next = prev
      .then(job)
      .catch((err) => {
        this.stats.errors++;
        console.error(`[thermal] rig ${rigId}: ${describeErrorForLog(err)}`);
      })
      .finally(() => {
        this.queued--;
        if (this.chains.get(rigId) === next) this.chains.delete(rigId);
      });
    this.chains.set(rigId, next);
  }

  private async rigSlot(rigId: string): Promise<RigSlot> {
    const now = Date.now();
    let slot = this.rigs.get(rigId);
    if (slot && now - slot.at < RUN_CACHE_MS) return slot;
    const run = await activeRunOfRig(this.ctx.ds, rigId);
    if (!slot || slot.runId !== (run?.id ?? null)) {
      const baselines = run ? await baselinesOfRun(this.ctx.ds, rigId, run.id) : new Map<number, number>();
      const trendPoints = run ? await trendFitsOfRun(this.ctx.ds, rigId, run.id) : new Map();
      slot = { runId: run?.id ?? null, runCode: run?.code ?? null, remainingH: null, at: now, sockets: new Map(), baselines, trendPoints };
      this.rigs.set(rigId, slot);
    }
    slot.remainingH = run?.remainingH ?? null;
    slot.at = now;
    return slot;
  }

  private async onTelemetry(m: TelemetryLanded): Promise<void> {
    this.stats.messages++;
    const rig = await this.rigSlot(m.rigId);
    if (rig.runId === null) return; // identification belongs to a run: its baseline and its flag
    for (let k = 0; k < m.socket.length; k++) {
      const i = m.socket[k];
      let s = rig.sockets.get(i);
      if (!s) {
        const baselineThetaCPerW = rig.baselines.get(i) ?? null;
        s = {
          track: new SocketThermalTrack(this.trackOptions, { baselineThetaCPerW, trendPoints: rig.trendPoints.get(i) ?? [] }),
          lastStoredTheta: null,
          lastStoredAt: 0,
          baselineStored: baselineThetaCPerW !== null,
        };
        rig.sockets.set(i, s);
        rig.trendPoints.delete(i); // the track holds its own copy now
      }
      const flags = m.flags[k];
      s.track.remainingH = rig.remainingH;
      const e = s.track.push({
        tS: m.stressClockS,
        caseC: m.caseC[k],
        ambientC: m.chamberC,
        powerW: Math.abs(m.vV[k] * m.iA[k]),
        biasOn: (flags & FLAG_BIAS_ON) !== 0 && (flags & FLAG_TRIPPED) === 0,
      });
      if (e) await this.onFit(m, rig, i, s, e);
    }
  }

  private async onFit(m: TelemetryLanded, rig: RigSlot, socket: number, s: SocketSlot, e: TrackEvent): Promise<void> {
    this.stats.fits++;
    const f = e.fit;
    const now = Date.now();
    const theta = f.thetaCPerW;
    const moved = theta !== null && (s.lastStoredTheta === null || Math.abs(theta / s.lastStoredTheta - 1) >= STORE_CHANGE_FRACTION);
    // The fit that set the baseline is always stored (a restarted server reads the baseline back).
    const newBaseline = e.baselineThetaCPerW !== null && !s.baselineStored;
    // A fit that joined the trend's series is stored too (one per identification window at most): a
    // restarted tracker rebuilds the series from them and the socket sheet shows the latest evaluation.
    const store =
      e.trigger !== 'periodic' ||
      e.flag !== null ||
      newBaseline ||
      e.trendPoint ||
      (f.good && (moved || now - s.lastStoredAt >= STORE_EVERY_MS));
    if (newBaseline) s.baselineStored = true;
    if (store) {
      await insertFit(this.ctx.ds, {
        rigId: m.rigId,
        runId: rig.runId,
        socketIndex: socket,
        identifiedAt: m.ts.toISOString(),
        stressClockS: m.stressClockS,
        trigger: e.trigger,
        identifiable: f.identifiable,
        good: f.good,
        method: f.method,
        thetaCPerW: theta,
        tauS: f.tauS,
        tauNote: f.tauNote,
        offsetC: f.offsetC,
        offsetBasis: e.offsetBasis,
        r2: f.r2,
        rmsC: f.rmsC,
        samples: f.samples,
        sampleIntervalS: f.sampleIntervalS,
        meanPowerW: f.meanPowerW,
        baselineThetaCPerW: e.baselineThetaCPerW,
        riseFraction: e.riseFraction,
        reason: f.reason,
        trend: e.trend,
        trendPoint: e.trendPoint,
        flagRule: e.flag === 'raise' ? e.rule : null,
      });
      this.stats.stored++;
      if (f.good && theta !== null) {
        s.lastStoredTheta = theta;
        s.lastStoredAt = now;
      }
    }
    if (e.flag === 'raise') {
      this.stats.flags++;
      await this.ctx.services.alarms.raise(thermalPathAlarm(m, rig, socket, e));
    } else if (e.flag === 'clear') {
      await this.ctx.services.alarms.clear('thermal-path', m.rigId, socket, { thetaCPerW: theta, riseFraction: e.riseFraction });
    }
  }
}

const f2 = (x: number | null | undefined) => (x === null || x === undefined || !Number.isFinite(x) ? 'n/a' : x.toFixed(2));
const pct = (x: number) => `${Math.round(x * 100)} %`;

/** The alarm's words and numbers (Emberlot's own). */
export function thermalPathAlarm(
  m: Pick<TelemetryLanded, 'rigId' | 'rigCode'>,
  rig: Pick<RigSlot, 'runId' | 'runCode'>,
  socket: number,
  e: TrackEvent,
): RaiseAlarmInput {
  const f = e.fit;
  const base = e.baselineThetaCPerW;
  const rise = e.riseFraction ?? 0;
  const byTrend = e.rule === 'trend' && e.trend !== null;
  const stepWords = `step rule: ${pct(rise)} above the ${f2(base)} °C/W found first in run ${rig.runCode ?? '?'} (flag limit ${pct(THERMAL_PATH_RISE_FRACTION)}). `;
  return {
    kind: 'thermal-path',
    severity: 'warning',
    rigId: m.rigId,
    runId: rig.runId,
    socketIndex: socket,
    title: `Socket ${socket} on ${m.rigCode}: thermal path degrading`,
    message:
      `The case-to-chamber thermal resistance of socket ${socket} identified from its telemetry is ${f2(f.thetaCPerW)} °C/W, ` +
      (byTrend ? `${pct(rise)} above the first value; ${trendWords(e.trend!, base, rig.runCode)} ` : stepWords) +
      `At the same power its junction runs hotter; a drying thermal pad or a loosening clamp looks like this before protection has to trip.`,
    action:
      'Check the socket’s heat sinking (thermal pad or grease, clamp pressure, airflow) at the next chance to open the oven safely, ' +
      'following the lab’s rules for hot ovens and high voltage. This flag is software: it is no substitute for the rig’s hardware interlocks.',
    details: {
      rule: byTrend ? 'trend' : 'step',
      trend: e.trend,
      thetaCPerW: f.thetaCPerW,
      baselineThetaCPerW: base,
      riseFraction: e.riseFraction,
      riseLimitFraction: THERMAL_PATH_RISE_FRACTION,
      tauS: f.tauS,
      r2: f.r2,
      rmsC: f.rmsC,
      method: f.method,
      offsetBasis: e.offsetBasis,
    },
  };
}

const slopeWords = (cPerWPerH: number) => `${Number((cPerWPerH * 100).toPrecision(2))} °C/W per 100 h`;

/** "trend rule: rising 0.08 °C/W per 100 h (90 % interval 0.05 to 0.11) over 12 fits and 140 h; reaches +25 % … in about 300 h." */
export function trendWords(t: ThermalTrend, base: number | null, runCode: string | null): string {
  const about = t.hoursToLimit === null ? '?' : t.hoursToLimit < 10 ? t.hoursToLimit.toFixed(1) : String(Math.round(t.hoursToLimit));
  return (
    `trend rule: rising ${slopeWords(t.slopeCPerWPerH)} (${pct(TREND_INTERVAL_CONFIDENCE)} interval ${slopeWords(t.lowCPerWPerH)} to ${slopeWords(t.highCPerWPerH)}) ` +
    `over ${t.n} fits and ${Math.round(t.spanH)} stress hours (Mann–Kendall p ${t.pValue < 0.001 ? '< 0.001' : t.pValue.toFixed(3)}); ` +
    `reaches +${Math.round(THERMAL_PATH_RISE_FRACTION * 100)} % over the ${f2(base)} °C/W found first in run ${runCode ?? '?'} in about ${about} h ` +
    `(horizon ${Math.round(t.horizonH)} h).`
  );
}
