/**
 * The run scheduler: every second (node-cron 4) and whenever telemetry lands, it drives each run
 * the rig holds:
 *   heating   — chamber set point (cmdId run:<id>:heat:<phase>); → stressing once a stored sample
 *               is within ±3 % of set; 'ambient-not-reached' after 5 stress-clock hours;
 *   stressing — bias on for the run's sockets (run:<id>:bias:<phase>); accrue hours from the
 *               database; at a read point → read-hold, at the plan's hours → cooling;
 *   read-hold / cooling — the hold's sequence (shared/holds): cool under bias (run:<id>:cool:…) to
 *               the lab's "remove bias at" temperature, humidity plans dew-point safe; then bias off
 *               (run:<id>:off:…, biasRemovedAt, read-point-due); then cool to the lab's safe-to-open
 *               temperature. While another run in the oven needs it hot, the hold waits under bias;
 *   paused / just aborted — bias off (run:<id>:off:…); the chamber goes to ambient when no other
 *               run in the oven needs the heat (run:<id>:cool:…);
 *   cooling   — → finished once the chamber is safe to open (or bias is off and the oven stays
 *               hot for another run).
 *   fault     — bias off for the run's sockets the rig reports; nothing else until a person retries
 *               or aborts. A command the rig refuses (at once) or leaves unanswered (after a few
 *               attempts) moves a running run into fault, with a critical alarm (reportFailure).
 * Before any command it compares the rig's last stored report with what it wants, so a restarted
 * server sends nothing the rig already did — but a report older than a command of the same kind
 * still on its way (or acked after the report) does not count (CommandTracker.reportReflects). It also re-plans booked runs when
 * a running run overruns its booked end (a rig going offline gets proposals instead: server/modules/replan).
 */
import cron, { type ScheduledTask } from 'node-cron';
import type { EntityManager } from 'typeorm';
import {
  chamberBand,
  planBiasSettings,
  planBiasV,
  planSchedule,
  socketBiased,
  accrualConditionsFor,
  type Job,
  when,
  chamberNeedsOf,
} from '../../../shared/scheduling';
import { AMBIENT_WITHIN_H as AMBIENT_LIMIT_H, chamberSetpointC } from '../../../shared/domain/standards';
import { FAULTABLE_STATES } from '../../../shared/domain/run-states';
import type { RunState } from '../../../shared/schemas/runs';
import { dewPointC } from '../../../shared/holds/dew-point';
import { coolingSetpointC, holdStep, type HoldDecision, type HoldInput } from '../../../shared/holds/sequence';
import { readHoldSettings } from '../lab-settings/lab-settings.data';
import { chamberStep, chamberWants, isChamberRun } from '../runs/chamber-engine';
import type { AppContext } from '../../context';
import type { RigEntity, RunEntity, StressPlanEntity } from '../../db/entities';
import { MEASURE_WITHIN_H, emitRunEvent, type PendingRunEvent } from '../runs/run-events';
import { sortedReadPoints } from '../runs/run-view';
import { loadSchedulingInputs, projectedWindow, timingFrom } from '../runs/scheduling-data';
import { RIG_STATUS_CHANGED, TELEMETRY_LANDED, type RigStatusChanged } from '../../events';
import type { RigCommandBody, RigLink } from '../telemetry/contracts';
import { CommandTracker } from './commands';
import { commandErrorWords } from '../alarms/command-words';
import { accrueStep, heatingStep, readPointDue, transitionRun, type EngineDeps, type StepOutcome } from '../runs/run-engine';
import { clockElapsedS, latestBatch, socketSamples, type BatchRow } from '../runs/telemetry-reads';
import type { SocketSample } from '../../../shared/scheduling';
import * as data from './scheduler.data';

/** Aborted runs keep being made safe (bias off) for this long after the abort. */
const ABORT_SAFE_WINDOW_MS = 24 * 3_600_000;

export interface SchedulerOptions {
  /** Defaults to ctx.services.rigLink (looked up on every command). */
  rigLink?: () => RigLink | undefined;
  /** Cron expression of the tick (default every second). Null: no cron (tests call pass()). */
  cronExpression?: string | null;
  /** Listen to TELEMETRY_LANDED / RIG_STATUS_CHANGED (default true). */
  listen?: boolean;
  /** Pause between back-to-back passes when telemetry keeps landing (default 200 ms; spares the CPU). */
  minPassGapMs?: number;
  /** Minimum ms between two exact "ambient reached yet?" clock sums for one heating phase (default 2000). */
  ambientCheckEveryMs?: number;
  /** How often to look for read points unmeasured MEASURE_WITHIN_H after bias came off (default 60 s; 0 = every pass). */
  overdueCheckEveryMs?: number;
  log?: (line: string) => void;
}

const b36 = (d: Date | null | undefined) => (d ? d.getTime().toString(36) : '0');

/** A command the run's state wants; `satisfied` = the rig's latest report (seq `reportSeq`) shows it done. */
type Want = { cmdId: string; cmd: RigCommandBody; satisfied: boolean; reportSeq?: number | null };

export class RunScheduler {
  readonly commands: CommandTracker;
  private readonly deps: EngineDeps;
  private task: ScheduledTask | null = null;
  private running: Promise<void> | null = null;
  private again = false;
  private stopped = false;
  private readonly offListeners: Array<() => void> = [];
  private readonly ambientCheckedAt = new Map<string, number>();
  /** `${runId}:${biasRemovedAt}` holds already measured or already reported overdue. */
  private readonly overdueSettled = new Set<string>();
  private lastOverdueCheckAt = -Infinity;
  private lastReplanAt = 0;
  private replanWanted: string | null = null;
  private readonly log: (line: string) => void;

  constructor(
    private readonly ctx: AppContext,
    private readonly opts: SchedulerOptions = {},
  ) {
    const link = opts.rigLink ?? (() => ctx.services.rigLink);
    this.deps = { audit: ctx.audit, now: () => ctx.now() };
    this.log = opts.log ?? ((l) => console.log(`[scheduler] ${l}`));
    this.commands = new CommandTracker(
      link,
      () => ctx.now().getTime(),
      (o, cmd) => void this.reportFailure(o.cmdId, o.rigCode, cmd, o.attempts, o.error ?? '', o.refused),
    );
  }

  start(): void {
    this.stopped = false;
    const expr = this.opts.cronExpression === undefined ? '* * * * * *' : this.opts.cronExpression;
    if (expr) {
      // node-cron 4: `scheduled: false` is ignored; createTask() + start() is the way.
      this.task = cron.createTask(expr, () => this.kick(), { name: 'emberlot-run-scheduler', noOverlap: true });
      void this.task.start();
    }
    if (this.opts.listen !== false) {
      const onLanded = () => this.kick();
      // A rig going offline no longer moves bookings by itself: the re-planner proposes and a
      // person accepts (server/modules/replan).
      const onStatus = (_s: RigStatusChanged) => this.kick();
      this.ctx.events.on(TELEMETRY_LANDED, onLanded);
      this.ctx.events.on(RIG_STATUS_CHANGED, onStatus);
      this.offListeners.push(
        () => this.ctx.events.off(TELEMETRY_LANDED, onLanded),
        () => this.ctx.events.off(RIG_STATUS_CHANGED, onStatus),
      );
    }
    this.kick();
  }

  async stop(): Promise<void> {
    this.stopped = true;
    if (this.task) {
      await this.task.stop();
      await this.task.destroy();
      this.task = null;
    }
    for (const off of this.offListeners.splice(0)) off();
    await this.running?.catch(() => undefined);
    await this.commands.settled();
  }

  /** Ask for a pass; passes never overlap, a request during one runs another right after. */
  kick(): void {
    if (this.stopped) return;
    if (this.running) {
      this.again = true;
      return;
    }
    this.running = (async () => {
      try {
        do {
          this.again = false;
          await this.pass();
          if (this.again && !this.stopped) await new Promise((r) => setTimeout(r, this.opts.minPassGapMs ?? 200));
        } while (this.again && !this.stopped);
      } catch (e) {
        this.log(`pass failed: ${e instanceof Error ? e.message : String(e)}`);
      } finally {
        this.running = null;
      }
    })();
  }

  /** Wait until no pass runs and every command has its answer (tests). */
  async idle(): Promise<void> {
    for (let k = 0; k < 50; k++) {
      await this.running;
      await this.commands.settled();
      if (!this.running) return;
    }
  }

  requestReplan(why: string): void {
    this.replanWanted = why;
  }

  /** One pass over every run the scheduler drives. */
  async pass(): Promise<void> {
    const now = this.ctx.now();
    const runs = await data.drivenRuns(this.ctx.ds.manager, new Date(now.getTime() - ABORT_SAFE_WINDOW_MS));
    const wanted = new Set<string>();
    for (const r of runs) {
      if (!r.rigId || (r.state === 'aborted' && !r.startedAt)) continue;
      try {
        for (const id of await this.drive(r.id)) wanted.add(id);
      } catch (e) {
        this.log(`run ${r.code}: ${e instanceof Error ? e.message : String(e)}`);
      }
    }
    this.commands.forgetExcept(wanted);
    await this.maybeReplan(runs);
    try {
      await this.checkReadPointsOverdue();
    } catch (e) {
      this.log(`read-point check failed: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  /**
   * 'read-point-overdue' once per hold: a read point with no measurements MEASURE_WITHIN_H after
   * bias came off — a run still in read-hold, or the final read point of a cooling or finished run.
   */
  private async checkReadPointsOverdue(): Promise<void> {
    const now = this.ctx.now();
    if (now.getTime() - this.lastOverdueCheckAt < (this.opts.overdueCheckEveryMs ?? 60_000)) return;
    this.lastOverdueCheckAt = now.getTime();
    const limitMs = MEASURE_WITHIN_H * 3_600_000;
    const rows = await data.readPointHoldsBefore(this.ctx.ds.manager, new Date(now.getTime() - limitMs));
    for (const r of rows) {
      const biasIso = new Date(r.bias_removed_at).toISOString();
      const key = `${r.id}:${biasIso}`;
      if (this.overdueSettled.has(key)) continue;
      const rps = sortedReadPoints({ readPointsH: r.read_points_h });
      const final = r.state !== 'read-hold';
      const readPointH = final ? (rps.find((h) => h >= r.duration_h) ?? r.duration_h) : rps[r.next_read_point - 1];
      if (readPointH === undefined) continue;
      if (await data.hasMeasurementAt(this.ctx.ds.manager, r.id, readPointH)) {
        this.overdueSettled.add(key);
        continue;
      }
      const reported = await data.lastRunAudit(this.ctx.ds.manager, r.id, 'run.read-point-overdue');
      this.overdueSettled.add(key);
      if (reported?.details?.biasRemovedAt === biasIso) continue;
      const measureBy = new Date(new Date(r.bias_removed_at).getTime() + limitMs);
      const overdueH = (now.getTime() - measureBy.getTime()) / 3_600_000;
      await this.ctx.audit.record({
        actor: 'system',
        action: 'run.read-point-overdue',
        entity: 'run',
        entityId: r.id,
        reason: `No measurements for the ${final ? 'final ' : ''}read point at ${readPointH} h within ${MEASURE_WITHIN_H} h of removing bias.`,
        details: { biasRemovedAt: biasIso, readPointH, final, measureBy: measureBy.toISOString() },
      });
      emitRunEvent(this.ctx, {
        type: 'read-point-overdue',
        runId: r.id,
        runCode: r.code,
        rigId: r.rig_id,
        rigCode: r.rig_code,
        readPointH,
        final,
        biasRemovedAt: biasIso,
        measureBy: measureBy.toISOString(),
        overdueH,
      });
    }
  }

  /** Drive one run: DB steps first (locked), then the commands its (new) state wants. */
  async drive(runId: string): Promise<string[]> {
    const events: StepOutcome['events'] = [];
    for (let k = 0; k < 40; k++) {
      const out = await this.ctx.ds.transaction(async (m) => {
        const locked = await data.runOnRig(m, runId, true);
        if (!locked) return null;
        const { run, plan, rig } = locked;
        // Unbiased chamber runs move on the chamber's own reports (server/modules/chamber).
        if (isChamberRun(plan)) return chamberStep(m, this.deps, run, plan, rig);
        if (run.state === 'heating') return heatingStep(m, this.deps, run, plan, rig);
        if (run.state === 'stressing') return accrueStep(m, this.deps, run, plan, rig);
        if (run.state === 'read-hold') return this.holdPhaseStep(m, run, plan, rig);
        if (run.state === 'cooling') return this.coolingStep(m, run, plan, rig);
        return null;
      });
      if (!out) break;
      events.push(...out.events);
      if (!out.changed || (!out.to && !out.more)) break;
    }
    for (const e of events) emitRunEvent(this.ctx, e);
    const current = await data.runOnRig(this.ctx.ds.manager, runId);
    if (!current) return [];
    const { run, plan, rig } = current;
    const chamber = isChamberRun(plan);
    if (run.state === 'heating' && !chamber) await this.checkAmbient(run, plan, rig);
    const wants = chamber ? await chamberWants(this.ctx.ds.manager, run, plan, rig) : await this.wants(run, plan, rig);
    for (const w of wants) {
      // "Satisfied" read from a report that predates a command still on its way is not satisfied.
      const satisfied = w.satisfied && this.commands.reportReflects(rig.code, w.cmd.type, w.cmdId, w.reportSeq ?? null);
      this.commands.ensure(rig.code, w.cmdId, w.cmd, satisfied);
    }
    return wants.map((w) => w.cmdId);
  }

  // -------------------------------------------------------------------------------------------

  /** Does another run in this oven need the chamber hot? */
  private async ovenShared(run: RunEntity): Promise<boolean> {
    return data.otherRunNeedsHeat(this.ctx.ds.manager, run.rigId!, run.id);
  }

  /** The commands this run's state wants, each with "is the rig already there?". */
  private async wants(run: RunEntity, plan: StressPlanEntity, rig: RigEntity): Promise<Want[]> {
    const m = this.ctx.ds.manager;
    const latest = await latestBatch(m, rig.id);
    const sockets = await data.runSockets(m, run.id);
    const live = sockets.filter((s) => !s.tripped).map((s) => s.socketIndex);
    const all = sockets.map((s) => s.socketIndex);
    const readings = latest ? ((await socketSamples(m, rig.id, latest.seq, latest.seq, all)).get(latest.seq) ?? []) : [];
    const reading = new Map(readings.map((r) => [r.socket, r]));
    const cond = accrualConditionsFor(plan);
    const setpointIs = (c: number, b: BatchRow | null) => !!b && Math.abs(b.setpointC - c) < 0.05;
    // The controller aims at the middle of the band (a one-sided band: above the stated minimum).
    const setpointC = chamberSetpointC(plan.chamberC, plan.chamberBand);
    const out: Want[] = [];
    const heat = (): Want => ({
      cmdId: `run:${run.id}:heat:${b36(run.heatingSince)}`,
      cmd: { type: 'setpoint', setpointC: setpointC, ...(plan.humidityPct !== null ? { humidityPct: plan.humidityPct } : {}) },
      satisfied: setpointIs(setpointC, latest),
    });
    const off = (phase: string): Want | null =>
      all.length
        ? {
            cmdId: `run:${run.id}:off:${phase}`,
            cmd: { type: 'bias', sockets: all, on: false },
            satisfied:
              !!latest &&
              all.every((k) => {
                const r = reading.get(k);
                return !r || !r.biasOn || r.tripped;
              }),
          }
        : null;
    const hold = async (key: string): Promise<void> => {
      const d = holdStep((await this.holdInput(m, run, plan, rig, latest, readings)).input);
      if (d.chamber) out.push(this.holdChamberWant(run, plan, key, d.chamber, latest));
      const o = d.biasOff ? off(key) : null;
      if (o) out.push(o);
    };
    // An aborted run cools at once, a humidity plan's chamber still no lower than its dew point + margin (shared/holds).
    const cool = async (phase: string): Promise<Want | null> =>
      (await this.ovenShared(run))
        ? null
        : this.holdChamberWant(
            run,
            plan,
            phase,
            {
              setpointC: coolingSetpointC({
                chamberC: latest?.chamberC ?? null,
                humidityPct: latest?.humidityPct ?? null,
                humidityControlled: plan.humidityPct !== null,
                planChamberC: chamberSetpointC(plan.chamberC, plan.chamberBand),
              }),
              humidityOff: plan.humidityPct !== null,
            },
            latest,
          );
    switch (run.state as RunState) {
      case 'heating':
        out.push(heat());
        break;
      case 'stressing': {
        out.push(heat());
        if (live.length) {
          out.push({
            cmdId: `run:${run.id}:bias:${b36(run.ambientReachedAt)}`,
            cmd: { type: 'bias', sockets: live, on: true, ...planBiasSettings(plan) },
            satisfied: !!latest && live.every((k) => socketBiased(reading.get(k), cond) || reading.get(k)?.tripped === true),
          });
        }
        break;
      }
      case 'paused': {
        const o = off(`p${b36(run.stateChangedAt)}`);
        if (o) out.push(o);
        break;
      }
      case 'read-hold':
        await hold(`rp${run.nextReadPoint - 1}`);
        break;
      case 'fault': {
        // Only the sockets the rig reports: a socket it does not have cannot be biased, and naming
        // it would make the rig refuse the bias-off as well.
        const reported = all.filter((k) => reading.has(k));
        if (reported.length) {
          out.push({
            cmdId: `run:${run.id}:off:f${b36(run.faultAt)}`,
            cmd: { type: 'bias', sockets: reported, on: false },
            satisfied: reported.every((k) => {
              const r = reading.get(k);
              return !r || !r.biasOn || r.tripped;
            }),
          });
        }
        break;
      }
      case 'cooling':
        await hold('end');
        break;
      case 'aborted': {
        const o = off('end');
        if (o) out.push(o);
        const c = await cool('end');
        if (c) out.push(c);
        break;
      }
      default:
        break;
    }
    for (const w of out) w.reportSeq = latest?.seq ?? null;
    return out;
  }

  /** The hold's inputs from the rig's latest report (and the other runs that keep the oven hot). */
  private async holdInput(
    m: EntityManager,
    run: RunEntity,
    plan: StressPlanEntity,
    rig: RigEntity,
    latest: BatchRow | null,
    readings: SocketSample[],
  ): Promise<{ input: HoldInput; others: string[] }> {
    const others = await data.otherRunsNeedingHeat(m, rig.id, run.id);
    const sockets = new Set((await data.runSockets(m, run.id)).map((s) => s.socketIndex));
    const anyBiased = !!latest && readings.some((r) => sockets.has(r.socket) && r.biasOn && !r.tripped);
    return {
      others,
      input: {
        phase: run.holdPhase,
        chamberC: latest?.chamberC ?? null,
        humidityPct: latest?.humidityPct ?? null,
        anyBiased,
        ovenNeededHot: others.length > 0,
        planChamberC: chamberSetpointC(plan.chamberC, plan.chamberBand),
        humidityControlled: plan.humidityPct !== null,
        settings: await readHoldSettings(m),
      },
    };
  }

  /** The chamber command of a hold: one cmdId per hold for a dry plan, one per ramp step for a humidity plan. */
  private holdChamberWant(
    run: RunEntity,
    plan: StressPlanEntity,
    key: string,
    c: NonNullable<HoldDecision['chamber']>,
    latest: BatchRow | null,
  ): Want {
    const humid = plan.humidityPct !== null;
    return {
      cmdId: `run:${run.id}:cool:${key}${humid ? `:${Math.round(c.setpointC)}` : ''}`,
      cmd: { type: 'setpoint', setpointC: c.setpointC, ...(c.humidityOff ? { humidityPct: null } : {}) },
      // Reports carry no humidity set point: a command that turns humidity off is sent (once per cmdId) regardless.
      satisfied: !c.humidityOff && !!latest && Math.abs(latest.setpointC - c.setpointC) < 0.05,
    };
  }

  /**
   * A hold's phase from the rig's latest report (locked with the run): stored when it changes,
   * audited; when bias comes off, biasRemovedAt and the read-point-due event (the 96 h window
   * starts then, not at the read point).
   */
  private async holdPhaseStep(
    m: EntityManager,
    run: RunEntity,
    plan: StressPlanEntity,
    rig: RigEntity,
  ): Promise<StepOutcome & { decision: HoldDecision; input: HoldInput; latest: BatchRow | null; others: string[] }> {
    const latest = await latestBatch(m, rig.id);
    const sockets = (await data.runSockets(m, run.id)).map((s) => s.socketIndex);
    const readings = latest ? ((await socketSamples(m, rig.id, latest.seq, latest.seq, sockets)).get(latest.seq) ?? []) : [];
    const { input, others } = await this.holdInput(m, run, plan, rig, latest, readings);
    const decision = holdStep(input);
    if (decision.phase === run.holdPhase) return { changed: false, events: [], decision, input, latest, others };
    const now = this.ctx.now();
    const biasComesOff = decision.biasOff && !run.biasRemovedAt;
    await data.setHoldPhase(m, run.id, decision.phase, now, biasComesOff ? now : null);
    const dew =
      input.chamberC !== null && input.humidityPct !== null && input.humidityPct > 0 ? dewPointC(input.chamberC, input.humidityPct) : null;
    await this.ctx.audit.record(
      {
        actor: 'system',
        action: 'run.hold-phase',
        entity: 'run',
        entityId: run.id,
        reason: decision.phase === 'oven-shared' ? `The oven is kept hot for ${others.join(', ')}: the hold waits under bias.` : null,
        details: {
          from: run.holdPhase,
          to: decision.phase,
          chamberC: input.chamberC,
          humidityPct: input.humidityPct,
          dewPointC: dew,
          ...input.settings,
          ...(others.length ? { ovenKeptHotFor: others } : {}),
        },
      },
      m,
    );
    const events: StepOutcome['events'] = [];
    if (biasComesOff) {
      const rps = sortedReadPoints(plan);
      const final = run.state === 'cooling';
      const idx = final ? rps.findIndex((h) => h >= plan.durationH) : run.nextReadPoint - 1;
      const readPointH = final ? (idx >= 0 ? rps[idx] : plan.durationH) : rps[idx];
      events.push(readPointDue(run, rig, readPointH, idx, run.stressHours, now, final));
      run.biasRemovedAt = now;
    }
    run.holdPhase = decision.phase;
    run.holdPhaseSince = now;
    return { changed: true, events, decision, input, latest, others };
  }

  /** Cooling → finished once the chamber is safe to open, or bias is off and the oven stays hot for another run. */
  private async coolingStep(m: EntityManager, run: RunEntity, plan: StressPlanEntity, rig: RigEntity): Promise<StepOutcome> {
    const step = await this.holdPhaseStep(m, run, plan, rig);
    const { decision, input, latest, others } = step;
    const biasOff = this.commands.acked(`run:${run.id}:off:end`) || (!!latest && latest.seq > run.accruedToSeq && !input.anyBiased);
    const done = decision.biasOff && biasOff && (decision.phase === 'safe-to-open' || others.length > 0);
    if (!done) return { changed: step.changed, events: step.events };
    const ev = await transitionRun(
      m,
      this.deps,
      run,
      rig,
      'finished',
      { finishedAt: this.ctx.now() },
      {
        actor: 'system',
        action: 'run.finish',
        details: {
          stressHours: run.stressHours,
          targetH: plan.durationH,
          chamberC: latest?.chamberC ?? null,
          ovenKeptHot: others.length > 0,
        },
      },
    );
    return { changed: true, to: 'finished', events: [...step.events, ev] };
  }

  /** 'ambient-not-reached' once per heating phase when 5 stress-clock hours pass without the band. */
  private async checkAmbient(run: RunEntity, plan: StressPlanEntity, rig: RigEntity): Promise<void> {
    const key = `${run.id}:${b36(run.heatingSince)}`;
    const nowMs = this.ctx.now().getTime();
    const last = this.ambientCheckedAt.get(key);
    if (last === -1 || (last !== undefined && nowMs - last < (this.opts.ambientCheckEveryMs ?? 2000))) return;
    this.ambientCheckedAt.set(key, nowMs);
    const { elapsedS, lastChamberC } = await clockElapsedS(this.ctx.ds.manager, rig.id, run.accruedToSeq);
    if (elapsedS < AMBIENT_LIMIT_H * 3600) return;
    const heatingSince = run.heatingSince?.toISOString() ?? null;
    const done = await data.lastRunAudit(this.ctx.ds.manager, run.id, 'run.ambient-overdue');
    this.ambientCheckedAt.set(key, -1);
    if (done && done.details?.heatingSince === heatingSince) return;
    const band = chamberBand(plan.chamberC, plan.chamberBand);
    await this.ctx.audit.record({
      actor: 'system',
      action: 'run.ambient-overdue',
      entity: 'run',
      entityId: run.id,
      reason: `The chamber did not reach ${+band.lowC.toFixed(2)}–${+band.highC.toFixed(2)} °C within ${AMBIENT_LIMIT_H} stress hours of heating.`,
      details: { heatingSince, elapsedStressH: elapsedS / 3600, lastChamberC },
    });
    emitRunEvent(this.ctx, {
      type: 'ambient-not-reached',
      runId: run.id,
      runCode: run.code,
      rigId: rig.id,
      rigCode: rig.code,
      heatingSince: heatingSince ?? '',
      elapsedStressH: elapsedS / 3600,
      limitH: AMBIENT_LIMIT_H,
      setC: plan.chamberC,
      lowC: band.lowC,
      highC: band.highC,
      lastChamberC,
    });
  }

  /**
   * A command the rig refused or did not answer: a running run goes into fault (bias comes off, no
   * hours count, a person retries after the fix or aborts), and a critical alarm says what happened.
   */
  private async reportFailure(
    cmdId: string,
    rigCode: string,
    cmd: RigCommandBody,
    attempts: number,
    error: string,
    refused: boolean,
  ): Promise<void> {
    const runId = /^run:([0-9a-f-]{36}):/.exec(cmdId)?.[1];
    if (!runId) return;
    const run = await data.findRun(this.ctx.ds.manager, runId).catch(() => null);
    if (!run) return;
    this.log(`command ${cmdId} to ${rigCode} ${refused ? 'refused' : 'unanswered'} (${attempts}×): ${error}`);
    const command = cmd.type === 'setpoint' ? 'setpoint' : 'bias';
    const biasOn = cmd.type === 'bias' ? cmd.on : undefined;
    let faulted: PendingRunEvent | null = null;
    try {
      faulted = await this.faultRun(runId, rigCode, { command, biasOn, attempts, error, refused, cmdId });
    } catch (e) {
      this.log(`run ${run.code}: could not record the fault: ${e instanceof Error ? e.message : String(e)}`);
    }
    if (faulted) emitRunEvent(this.ctx, faulted);
    emitRunEvent(this.ctx, {
      type: 'command-failed',
      runId,
      runCode: run.code,
      rigId: run.rigId,
      rigCode,
      cmdId,
      command,
      ...(biasOn === undefined ? {} : { biasOn }),
      attempts,
      error,
      refused,
      faulted: !!faulted,
    });
  }

  /** Running run → fault (locked, audited as run.fault); null when the run is not in a state that faults. */
  private async faultRun(
    runId: string,
    rigCode: string,
    f: { command: 'setpoint' | 'bias'; biasOn?: boolean; attempts: number; error: string; refused: boolean; cmdId: string },
  ): Promise<PendingRunEvent | null> {
    return this.ctx.ds.transaction(async (m) => {
      const locked = await data.runOnRig(m, runId, true);
      if (!locked || !FAULTABLE_STATES.includes(locked.run.state)) return null;
      const { run, rig } = locked;
      const reason = faultReason(rigCode, f);
      return transitionRun(
        m,
        this.deps,
        run,
        rig,
        'fault',
        { faultReason: reason, faultAt: this.ctx.now() },
        {
          actor: 'system',
          action: 'run.fault',
          reason,
          details: {
            command: f.command,
            biasOn: f.biasOn ?? null,
            refused: f.refused,
            attempts: f.attempts,
            rigError: f.error,
            cmdId: f.cmdId,
          },
        },
      );
    });
  }

  // -------------------------------------------------------------------------------------------
  // Re-planning booked runs

  private async maybeReplan(driven: RunEntity[]): Promise<void> {
    const nowMs = this.ctx.now().getTime();
    if (nowMs - this.lastReplanAt < 10_000 && !this.replanWanted) return;
    const t = timingFrom(this.ctx.config);
    let why = this.replanWanted;
    if (!why) {
      // Overrun: a running run whose projected end passed its booked end (beyond 1 % of its length).
      for (const r of driven.filter((x) => x.state !== 'aborted' && x.scheduledEnd && x.scheduledStart)) {
        const plan = await data.findPlan(this.ctx.ds.manager, r.planId);
        const w = projectedWindow(r, plan, nowMs, t);
        const len = r.scheduledEnd!.getTime() - r.scheduledStart!.getTime();
        if (w.endMs > r.scheduledEnd!.getTime() + Math.max(0.01 * len, t.msPerClockH)) {
          const bookedNext = await data.bookedRunsOn(this.ctx.ds.manager, r.rigId!);
          if (bookedNext) {
            why = `${r.code} overran its booked end (${when(r.scheduledEnd!.getTime())})`;
            await data.setEstimatedEnd(this.ctx.ds.manager, r.id, new Date(w.endMs));
            break;
          }
        }
      }
    }
    this.lastReplanAt = nowMs;
    this.replanWanted = null;
    if (why) await this.replan(why);
  }

  /**
   * LPT list scheduling of every booked run around the runs on the rigs; offline rigs take no
   * booked run except the one it already had. A moved run is audited with the reason.
   */
  async replan(why: string): Promise<number> {
    const nowMs = this.ctx.now().getTime();
    const t = timingFrom(this.ctx.config);
    return this.ctx.ds.transaction(async (m) => {
      await data.lockReplanning(m);
      const inputs = await loadSchedulingInputs(m, nowMs, t);
      const booked = inputs.runs.filter((r) => r.state === 'booked');
      if (!booked.length) return 0;
      const fixed = inputs.commitments.filter((c) => !booked.some((b) => b.id === c.runId));
      const jobs: Job[] = booked.map((r) => {
        const p = inputs.plans.get(r.planId)!;
        return {
          id: r.id,
          code: r.code,
          chamberC: chamberSetpointC(p.chamberC, p.chamberBand),
          humidityPct: p.humidityPct,
          biasV: planBiasV(p),
          sampleSize: r.sampleSize,
          durationH: p.durationH,
          readPointsH: p.readPointsH,
          chamber: chamberNeedsOf(p),
          rigIds: inputs.rigs.filter((g) => g.online || g.id === r.rigId).map((g) => g.id),
        };
      });
      const plan = planSchedule(
        jobs,
        inputs.rigs.map((r) => ({ ...r })),
        fixed,
        inputs.maintenance,
        nowMs,
        t,
      );
      let moved = 0;
      for (const a of plan.assignments) {
        const r = booked.find((b) => b.id === a.jobId)!;
        if (r.rigId === a.rigId && r.scheduledStart?.getTime() === a.startMs) continue;
        await data.moveBooking(m, r.id, a.rigId, new Date(a.startMs), new Date(a.endMs));
        const fromRig = inputs.rigs.find((g) => g.id === r.rigId)?.code ?? null;
        await this.ctx.audit.record(
          {
            actor: 'system',
            action: 'run.replan',
            entity: 'run',
            entityId: r.id,
            reason: why,
            details: {
              fromRig,
              toRig: a.rigCode,
              fromStart: r.scheduledStart?.toISOString() ?? null,
              toStart: new Date(a.startMs).toISOString(),
              toEnd: new Date(a.endMs).toISOString(),
            },
          },
          m,
        );
        moved++;
      }
      if (moved) this.log(`re-planned ${moved} booked run(s): ${why}`);
      return moved;
    });
  }
}

/** A command's name in the operator's words: "the bias-on command", "the set-point command". */
export function commandWords(command: 'setpoint' | 'bias', biasOn?: boolean): string {
  if (command === 'setpoint') return 'the chamber set-point command';
  return biasOn === false ? 'the bias-off command' : 'the bias-on command';
}

/** Why a run went into fault, in the operator's words (stored on the run and in the audit). */
export function faultReason(
  rigCode: string,
  f: { command: 'setpoint' | 'bias'; biasOn?: boolean; attempts: number; error: string; refused: boolean },
): string {
  const what = commandWords(f.command, f.biasOn);
  const words = commandErrorWords(f.error);
  return f.refused
    ? `${rigCode} refused ${what}: "${words}".`
    : `${rigCode} did not confirm ${what} after ${f.attempts} attempts (${words}).`;
}

/** Start the scheduler for the API process; returns its stop function. */
export function startScheduler(ctx: AppContext, opts: SchedulerOptions = {}): () => Promise<void> {
  const s = new RunScheduler(ctx, opts);
  ctx.services.scheduler = s;
  s.start();
  return async () => {
    await s.stop();
    if (ctx.services.scheduler === s) ctx.services.scheduler = undefined;
  };
}
