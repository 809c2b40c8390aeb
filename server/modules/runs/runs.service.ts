/**
 * Runs: proposals, booking (with the plan-check override), reads, the timeline, socket loading and
 * the people-driven state changes. Every state change is audited in the same transaction as the
 * change itself; a person's change names the rowVersion it was made against (optimistic locking).
 * The scheduler (server/modules/scheduler) makes the machine-driven moves.
 */
import { In, Not, type EntityManager } from 'typeorm';
import {
  earliestSlot,
  lateH,
  planBiasV,
  proposeRigs,
  runDurationH,
  runDurationMs,
  rigRefusals,
  when,
  type RunNeeds,
  type TimingOptions,
  chamberNeedsOf,
} from '../../../shared/scheduling';
import { BIASED_HOLD_PHASES } from '../../../shared/holds/sequence';
import { chamberSetpointC } from '../../../shared/domain/standards';
import { DEFAULT_PRIORITY } from '../../../shared/domain/priority';
import type { SessionUser } from '../../../shared/schemas/auth';
import {
  allowedActions,
  RUN_ACTION_LABEL,
  RUN_STATE_LABEL,
  TERMINAL_STATES,
  type AbortRunInput,
  type BookRunInput,
  type BookSampleInput,
  type CalendarApplyInput,
  type CalendarApplyResult,
  type CalendarProposal,
  type SampleBooking,
  type ProposalInput,
  type ProposalResult,
  type Run,
  type RunAction,
  type RunActionInput,
  type RetryRunInput,
  type StartPermit,
  type StartRunInput,
  type RunDetail,
  type RunState,
  type SocketFlag,
  type SocketLoadInput,
  type SocketLoadResult,
  type Timeline,
} from '../../../shared/schemas/runs';
import type { AppContext } from '../../context';
import {
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RigMaintenanceEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  SampleEntity,
  StressPlanEntity,
  type OverrideRequestEntity,
} from '../../db/entities';
import { DEVIATION_REASON_MIN, sampleShortfall } from '../../../shared/evidence';
import { AppError, conflict, notFound, unprocessable } from '../../http/errors';
import { blockingFindings, type BlockingFinding } from '../approvals/approvals.service';
import { accrueStep, firstReadPointIndex, transitionRun, type EngineDeps } from './run-engine';
import { maxSeq } from './telemetry-reads';
import { maxChamberSeq } from './chamber.data';
import { emitRunEvent, type PendingRunEvent } from './run-events';
import { planRef, sampleView, socketsTakenOnRig, toRunDetail, toRuns } from './run-view';
import { loadSchedulingInputs, projectedWindow, SCHEDULED_STATES, timingFrom } from './scheduling-data';
import { chamberConflict, startPermit } from './start-permit';
import { applyCalendar, calendarProposal, CALENDAR_LOCK } from './calendar';
import { advisoryXactLock, bumpRunRowVersion, devicesBySerial, devicesInOpenRuns, timelineRuns } from './runs.data';

/** Serialises bookings and calendar moves (one transaction at a time decides who gets a rig window). */
const BOOKING_LOCK = CALENDAR_LOCK;

/** What a run action works on, read in its transaction. */
interface ActionContext {
  m: EntityManager;
  actor: SessionUser;
  run: RunEntity;
  rig: RigEntity | null;
  plan: StressPlanEntity;
  now: Date;
  reason: string | null;
}

/** One part of a sample booking: what bookOne books onto one rig. */
interface BookingPart {
  plan: StressPlanEntity;
  type: DeviceTypeEntity;
  lots: LotEntity[];
  sample: SampleEntity;
  part: BookSampleInput['parts'][number];
  overridden: boolean;
  /** The approved override request this booking uses (when the plan check blocks). */
  approval: OverrideRequestEntity | null;
  findings: BlockingFinding[];
  /** The request's due date and priority (every part of a sample carries the same). */
  terms: { dueAt: Date | null; priority: number };
}

const needsOf = (plan: StressPlanEntity, sampleSize: number): RunNeeds => ({
  // The oven must reach, and share, the set point it is driven to (the middle of the plan's band).
  chamberC: chamberSetpointC(plan.chamberC, plan.chamberBand),
  humidityPct: plan.humidityPct,
  biasV: planBiasV(plan),
  sampleSize,
  durationH: plan.durationH,
  readPointsH: plan.readPointsH,
  chamber: chamberNeedsOf(plan),
});

/**
 * A chamber's load: each serial of the list gets the next load position no other run in the
 * chamber holds (positions are bookkeeping, not sockets: the devices sit on the chamber's trays).
 */
async function chamberPositions(
  m: EntityManager,
  rig: RigEntity,
  runId: string,
  serials: readonly string[],
): Promise<Record<string, string>> {
  const taken = await socketsTakenOnRig(m, rig.id, runId);
  const out: Record<string, string> = {};
  let next = 0;
  for (const serial of serials) {
    while (taken.has(next)) next++;
    out[String(next)] = serial;
    next++;
  }
  return out;
}

/**
 * How far booking may follow a proposed start that slid (see book): 1 clock hour, or 5 % of the
 * run's length when that is more. Emberlot's own choice.
 */
export function bookingSlideToleranceH(needs: Parameters<typeof runDurationMs>[0], t: TimingOptions): number {
  return Math.max(1, 0.05 * (runDurationMs(needs, t) / t.msPerClockH));
}

export class RunsService {
  readonly timing: TimingOptions;
  private readonly deps: EngineDeps;

  constructor(private readonly ctx: AppContext) {
    this.timing = timingFrom(ctx.config);
    this.deps = { audit: ctx.audit, now: () => ctx.now() };
  }

  private get ds() {
    return this.ctx.ds;
  }

  // -------------------------------------------------------------------------------------------
  // Reads

  async list(q: { state?: RunState; rigId?: string; open?: '0' | '1' }): Promise<Run[]> {
    const where: Record<string, unknown> = {};
    if (q.state) where.state = q.state;
    if (q.rigId) where.rigId = q.rigId;
    if (q.open === '1' && !q.state) where.state = Not(In([...TERMINAL_STATES]));
    const rows = await this.ds.getRepository(RunEntity).find({ where, order: { createdAt: 'DESC' }, take: 500 });
    return toRuns(this.ds.manager, rows);
  }

  async get(id: string): Promise<RunDetail> {
    const run = await this.ds.getRepository(RunEntity).findOneBy({ id });
    if (!run) throw notFound('The run');
    return toRunDetail(this.ds.manager, run);
  }

  async timeline(q: { from?: string; to?: string }): Promise<Timeline> {
    const now = this.ctx.now().getTime();
    const m = this.ds.manager;
    const t = this.timing;
    const rigs = await m.find(RigEntity, { order: { code: 'ASC' } });
    const recentMs = 14 * 24 * t.msPerClockH;
    const runs = await timelineRuns(m, SCHEDULED_STATES, new Date(now - recentMs));
    const plans = new Map(
      (runs.length ? await m.find(StressPlanEntity, { where: { id: In([...new Set(runs.map((r) => r.planId))]) } }) : []).map((p) => [
        p.id,
        p,
      ]),
    );
    const bars = runs.map((r) => {
      const plan = plans.get(r.planId)!;
      const w = TERMINAL_STATES.includes(r.state)
        ? { startMs: (r.startedAt ?? r.scheduledStart ?? r.createdAt).getTime(), endMs: (r.finishedAt ?? r.stateChangedAt).getTime() }
        : projectedWindow(r, plan, now, t);
      return {
        rigId: r.rigId!,
        bar: {
          runId: r.id,
          code: r.code,
          state: r.state,
          stateLabel: RUN_STATE_LABEL[r.state],
          start: new Date(w.startMs).toISOString(),
          end: new Date(Math.max(w.endMs, w.startMs + 1)).toISOString(),
          planName: plan.name,
          chamberC: plan.chamberC,
          humidityPct: plan.humidityPct,
          sampleSize: r.sampleSize,
          stressHours: r.stressHours,
          targetH: plan.durationH,
          dueAt: r.dueAt?.toISOString() ?? null,
          priority: r.priority,
          lateH: lateH(w.endMs, r.dueAt?.getTime() ?? null, t.msPerClockH),
        },
      };
    });
    const maint = await m.find(RigMaintenanceEntity, { order: { startsAt: 'ASC' } });
    let fromMs = q.from ? Date.parse(q.from) : Number.NaN;
    let toMs = q.to ? Date.parse(q.to) : Number.NaN;
    if (!Number.isFinite(fromMs)) {
      const starts = bars.filter((b) => !TERMINAL_STATES.includes(b.bar.state)).map((b) => Date.parse(b.bar.start));
      fromMs = Math.min(now - 6 * t.msPerClockH, ...starts.filter((s) => s > now - 30 * 24 * t.msPerClockH));
    }
    if (!Number.isFinite(toMs)) {
      const ends = bars.map((b) => Date.parse(b.bar.end));
      toMs = Math.max(now + 7 * 24 * t.msPerClockH, ...ends);
    }
    if (toMs <= fromMs) toMs = fromMs + 24 * t.msPerClockH;
    const visible = (s: number, e: number) => s < toMs && e > fromMs;
    return {
      from: new Date(fromMs).toISOString(),
      to: new Date(toMs).toISOString(),
      now: new Date(now).toISOString(),
      msPerClockH: t.msPerClockH,
      rows: rigs.map((rig) => ({
        rigId: rig.id,
        code: rig.code,
        name: rig.name,
        socketCount: rig.socketCount,
        online: rig.online,
        active: rig.active,
        bars: bars
          .filter((b) => b.rigId === rig.id && visible(Date.parse(b.bar.start), Date.parse(b.bar.end)))
          .map((b) => b.bar)
          .sort((a, b) => a.start.localeCompare(b.start)),
        maintenance: maint
          .filter((x) => x.rigId === rig.id && visible(x.startsAt.getTime(), x.endsAt.getTime()))
          .map((x) => ({ id: x.id, start: x.startsAt.toISOString(), end: x.endsAt.toISOString(), reason: x.reason })),
      })),
    };
  }

  // -------------------------------------------------------------------------------------------
  // The calendar (calendar.ts)

  calendar(): Promise<CalendarProposal> {
    return calendarProposal(this.ctx, this.timing);
  }

  applyCalendar(actor: SessionUser, input: CalendarApplyInput): Promise<CalendarApplyResult> {
    return applyCalendar(this.ctx, this.timing, actor, input);
  }

  // -------------------------------------------------------------------------------------------
  // Proposals and booking

  /** Plan, device type, lots and the request's own problems (wrong device type, too few devices). */
  private async requestContext(m: EntityManager, input: ProposalInput) {
    const plan = await m.findOne(StressPlanEntity, { where: { id: input.planId } });
    if (!plan) throw notFound('The plan');
    const type = await m.findOneOrFail(DeviceTypeEntity, { where: { id: plan.deviceTypeId } });
    const ids = [...new Set(input.lotIds)];
    const lots = await m.find(LotEntity, { where: { id: In(ids) }, order: { code: 'ASC' } });
    if (lots.length !== ids.length) throw unprocessable('One of the chosen lots was not found. Choose lots from the list.');
    const problems: string[] = [];
    for (const l of lots) {
      if (l.deviceTypeId !== plan.deviceTypeId) {
        const other = await m.findOneBy(DeviceTypeEntity, { id: l.deviceTypeId });
        problems.push(`Lot ${l.code} holds ${other?.partNumber ?? 'another part'}; the plan is for ${type.partNumber}.`);
      }
    }
    const registered = await m.count(DeviceEntity, { where: { lotId: In(ids) } });
    if (registered < input.sampleSize) {
      problems.push(
        `${lots.length === 1 ? `Lot ${lots[0].code} has` : `Lots ${lots.map((l) => l.code).join(', ')} have`} ${registered} registered devices; the run needs ${input.sampleSize}.`,
      );
    }
    const blocks = blockingFindings(plan, type, this.ctx.now());
    return { plan, type, lots, problems, blocks };
  }

  async propose(input: ProposalInput): Promise<ProposalResult> {
    const m = this.ds.manager;
    const { plan, problems, blocks } = await this.requestContext(m, input);
    const dueMs = this.dueMsOf(input.dueAt);
    const blockingFindings = blocks.map((f) => ({ code: f.code, title: f.title, explanation: f.explanation }));
    const now = this.ctx.now().getTime();
    const notBefore = Math.max(now, input.notBefore ? Date.parse(input.notBefore) : now);
    const inputs = await loadSchedulingInputs(m, now, this.timing);
    const needs = needsOf(plan, input.sampleSize);
    const p = proposeRigs(
      needs,
      inputs.rigs.map((r) => ({ ...r })),
      inputs.commitments,
      inputs.maintenance,
      notBefore,
      this.timing,
    );
    const byId = new Map(inputs.rigs.map((r) => [r.id, r]));
    return {
      plan: planRef(plan),
      sampleSize: input.sampleSize,
      durationH: runDurationH(needs, this.timing),
      blockingFindings,
      problems,
      options: problems.length
        ? []
        : p.options.map((o) => ({
            rigId: o.rigId,
            rigCode: o.rigCode,
            rigName: byId.get(o.rigId)!.name,
            online: byId.get(o.rigId)!.online,
            start: new Date(o.startMs).toISOString(),
            end: new Date(o.endMs).toISOString(),
            durationH: o.durationH,
            spareSockets: o.spareSockets,
            delayReasons: o.delayReasons,
            lateH: lateH(o.endMs, dueMs, this.timing.msPerClockH),
          })),
      refusals: p.refusals.map((r) => ({ ...r, rigName: byId.get(r.rigId)!.name })),
    };
  }

  async book(actor: SessionUser, input: BookRunInput): Promise<RunDetail> {
    const { planId, lotIds, override, deviation, rigId, start, sampleSize, dueAt, priority } = input;
    const { runs } = await this.bookParts(actor, {
      planId,
      lotIds,
      override,
      deviation,
      dueAt,
      priority,
      parts: [{ rigId, start, sampleSize }],
    });
    return toRunDetail(this.ds.manager, runs[0]);
  }

  /** A sample booked as one: a run per rig, all in one transaction (all or none). */
  async bookSample(actor: SessionUser, input: BookSampleInput): Promise<SampleBooking> {
    const { sample, runs } = await this.bookParts(actor, input);
    const m = this.ds.manager;
    return { sample: await sampleView(m, sample.id), runs: await Promise.all(runs.map((r) => toRunDetail(m, r))) };
  }

  /**
   * Make-up runs added to an existing sample (server/modules/make-up): booked like parts of a split
   * sample, so the verdict judges them with the sample's other runs as one. One run per part (a part
   * per lot made up, so its sockets take only that lot's devices), all on one rig side by side from
   * the first part's start, in one transaction (all or none). `expectedBookedSize` is the sample's
   * size the proposal was made for: a sample that changed since (a second click, a make-up booked by
   * someone else) is refused with 409.
   */
  async bookIntoSample(
    actor: SessionUser,
    input: {
      sampleId: string;
      rigId: string;
      start?: string;
      parts: Array<{ lotIds: string[]; sampleSize: number }>;
      expectedBookedSize: number;
      priority: number;
      override?: { requestId: string };
      details: Record<string, unknown>;
    },
  ): Promise<RunDetail[]> {
    const runs = await this.ds.transaction(async (m) => {
      await advisoryXactLock(m, BOOKING_LOCK);
      const sample = await m.findOne(SampleEntity, { where: { id: input.sampleId }, lock: { mode: 'pessimistic_write' } });
      if (!sample) throw notFound('The sample');
      if (sample.bookedSize !== input.expectedBookedSize) {
        throw conflict(
          `The sample changed since the proposal: it now holds ${sample.bookedSize} booked devices, not ${input.expectedBookedSize}. Reload the make-up proposal.`,
          { bookedSize: sample.bookedSize },
        );
      }
      const contexts = [];
      for (const part of input.parts) {
        const c = await this.requestContext(m, { planId: sample.planId, lotIds: part.lotIds, sampleSize: part.sampleSize });
        if (c.problems.length) throw unprocessable(c.problems.join(' '), { problems: c.problems });
        contexts.push({ ...c, part });
      }
      const { plan, blocks } = contexts[0];
      const overridden = blocks.length > 0;
      const approval = overridden ? await this.ctx.services.approvals.useForBooking(m, plan, input.override?.requestId, blocks) : null;
      const booked: RunEntity[] = [];
      let start = input.start;
      for (const c of contexts) {
        const run = await this.bookOne(m, actor, {
          plan: c.plan,
          type: c.type,
          lots: c.lots,
          sample,
          part: { rigId: input.rigId, start, sampleSize: c.part.sampleSize },
          overridden,
          approval,
          findings: blocks,
          terms: { dueAt: null, priority: input.priority },
        });
        // The lots' make-up runs stand side by side: same plan, same start, so they share the oven and hold together.
        if (booked.length === 0 && run.scheduledStart) start = run.scheduledStart.toISOString();
        booked.push(run);
      }
      const before = sample.bookedSize;
      sample.bookedSize = before + input.parts.reduce((n, p) => n + p.sampleSize, 0);
      await m.save(sample);
      if (approval) await this.ctx.services.approvals.markUsed(m, approval.id, sample.id);
      await this.ctx.audit.record(
        {
          actor,
          action: 'sample.make-up',
          entity: 'sample',
          entityId: sample.id,
          details: { ...input.details, runs: booked.map((r) => r.code), bookedBefore: before, bookedAfter: sample.bookedSize },
        },
        m,
      );
      return booked;
    });
    return Promise.all(runs.map((r) => toRunDetail(this.ds.manager, r)));
  }

  /** A request's due date in ms (null: none); a date already past is refused (it could only ever be late). */
  private dueMsOf(dueAt: string | null | undefined): number | null {
    if (!dueAt) return null;
    const ms = Date.parse(dueAt);
    if (ms <= this.ctx.now().getTime()) {
      throw unprocessable(`The due date ${when(ms)} has already passed; give a date after now or leave it empty.`, { field: 'dueAt' });
    }
    return ms;
  }

  private async bookParts(actor: SessionUser, input: BookSampleInput): Promise<{ sample: SampleEntity; runs: RunEntity[] }> {
    const dueMs = this.dueMsOf(input.dueAt);
    const terms = { dueAt: dueMs === null ? null : new Date(dueMs), priority: input.priority ?? DEFAULT_PRIORITY };
    return this.ds.transaction(async (m) => {
      await advisoryXactLock(m, BOOKING_LOCK);
      const total = input.parts.reduce((a, p) => a + p.sampleSize, 0);
      const { plan, type, lots, problems, blocks } = await this.requestContext(m, {
        planId: input.planId,
        lotIds: input.lotIds,
        sampleSize: total,
      });
      if (problems.length) throw unprocessable(problems.join(' '), { problems });
      const overridden = blocks.length > 0;
      // A blocking finding needs an override approved by a second person (approvals.service.ts).
      const approval = overridden ? await this.ctx.services.approvals.useForBooking(m, plan, input.override?.requestId, blocks) : null;
      const shortfall = sampleShortfall(plan.sampleSize, total, lots.length);
      if (shortfall && !input.deviation) {
        throw unprocessable(
          `${shortfall} Book the rest on another rig in the same booking (a split sample), or record a deviation with a reason of at least ${DEVIATION_REASON_MIN} characters.`,
          { plannedSize: plan.sampleSize, bookedSize: total },
        );
      }
      const at = this.ctx.now();
      const sample = await m.save(
        m.create(SampleEntity, {
          planId: plan.id,
          plannedSize: plan.sampleSize,
          bookedSize: total,
          deviationReason: shortfall ? input.deviation!.reason : null,
          deviationById: shortfall ? actor.id : null,
          deviationAt: shortfall ? at : null,
          createdById: actor.id,
        }),
      );
      const runs: RunEntity[] = [];
      for (const part of input.parts) {
        runs.push(
          await this.bookOne(m, actor, {
            plan,
            type,
            lots,
            sample,
            part,
            overridden,
            approval,
            findings: blocks,
            terms,
          }),
        );
      }
      if (approval) await this.ctx.services.approvals.markUsed(m, approval.id, sample.id);
      await this.ctx.audit.record(
        {
          actor,
          action: 'sample.book',
          entity: 'sample',
          entityId: sample.id,
          details: { planId: plan.id, plannedSize: plan.sampleSize, bookedSize: total, runs: runs.map((r) => r.code) },
        },
        m,
      );
      if (shortfall) {
        await this.ctx.audit.record(
          {
            actor,
            action: 'sample.deviation',
            entity: 'sample',
            entityId: sample.id,
            reason: input.deviation!.reason,
            details: { plannedSize: plan.sampleSize, bookedSize: total, runs: runs.map((r) => r.code) },
          },
          m,
        );
      }
      return { sample, runs };
    });
  }

  private async bookOne(m: EntityManager, actor: SessionUser, b: BookingPart): Promise<RunEntity> {
    const { plan, lots, part: input, overridden } = b;
    const rig = await m.findOne(RigEntity, { where: { id: input.rigId } });
    if (!rig) throw unprocessable('The chosen rig was not found. Choose one of the proposals.');
    const needs = needsOf(plan, input.sampleSize);
    const refusals = rigRefusals(rig, needs);
    if (refusals.length) throw unprocessable(refusals.join(' '), { reasons: refusals });
    const window = await this.bookingWindow(m, rig, needs, input.start);
    const { startMs, endMs } = window;
    const code = await this.newCode(
      m,
      plan.kind,
      lots.map((l) => l.code),
    );
    const at = this.ctx.now();
    const saved = await m.save(
      m.create(RunEntity, {
        code,
        planId: plan.id,
        rigId: rig.id,
        sampleId: b.sample.id,
        state: 'booked',
        sampleSize: input.sampleSize,
        scheduledStart: new Date(startMs),
        scheduledEnd: new Date(endMs),
        stateChangedAt: at,
        nextReadPoint: firstReadPointIndex(plan.readPointsH),
        overrideReason: overridden ? (b.approval?.reason ?? null) : null,
        overrideById: overridden ? (b.approval?.requestedById ?? null) : null,
        createdById: actor.id,
        dueAt: b.terms.dueAt,
        priority: b.terms.priority,
      }),
    );
    await m.insert(
      RunLotEntity,
      lots.map((l) => ({ runId: saved.id, lotId: l.id })),
    );
    await this.auditBooking(m, actor, b, rig, saved, window);
    return saved;
  }

  /**
   * The booked run's window on the rig: the requested start (following a proposal's slot that slid
   * within tolerance) or the earliest free slot.
   */
  private async bookingWindow(
    m: EntityManager,
    rig: RigEntity,
    needs: RunNeeds,
    start: string | undefined,
  ): Promise<{ startMs: number; endMs: number; requestedStartMs: number | null }> {
    const now = this.ctx.now().getTime();
    const inputs = await loadSchedulingInputs(m, now, this.timing);
    let startMs: number;
    let requestedStartMs: number | null = null;
    if (start) {
      requestedStartMs = Math.max(now, Date.parse(start));
      startMs = requestedStartMs;
      // The rig's own limits were refused in bookOne already: what the requested window adds.
      const clash = rigRefusals(
        rig,
        needs,
        {
          startMs,
          endMs: startMs + runDurationMs(needs, this.timing),
          commitments: inputs.commitments,
          maintenance: inputs.maintenance,
          timing: this.timing,
        },
        'window',
      );
      if (clash.length) {
        // A proposal's start is often the projected end of the run ahead of it, and that
        // projection slides with the clock (an overdue booking, a run still stressing): seconds
        // after proposing, the same slot starts a little later. Follow it, within a tolerance;
        // anything more is a different slot and needs new proposals.
        const slot = earliestSlot(rig, needs, requestedStartMs, inputs.commitments, inputs.maintenance, this.timing);
        const slideH = slot ? (slot.startMs - requestedStartMs) / this.timing.msPerClockH : Number.POSITIVE_INFINITY;
        if (!slot || slideH > bookingSlideToleranceH(needs, this.timing)) {
          throw conflict(`The rig is no longer free at ${when(startMs)}: ${clash.join(' ')} Ask for new proposals.`, { reasons: clash });
        }
        startMs = slot.startMs;
      }
    } else {
      const slot = earliestSlot(rig, needs, now, inputs.commitments, inputs.maintenance, this.timing);
      if (!slot) throw unprocessable(`Oven ${rig.code} cannot take this run.`);
      startMs = slot.startMs;
    }
    return { startMs, endMs: startMs + runDurationMs(needs, this.timing), requestedStartMs };
  }

  /** The booking's audit entries: the booking, and the override when the plan check was overridden. */
  private async auditBooking(
    m: EntityManager,
    actor: SessionUser,
    b: BookingPart,
    rig: RigEntity,
    saved: RunEntity,
    window: { startMs: number; endMs: number; requestedStartMs: number | null },
  ): Promise<void> {
    const { plan, type, lots, part: input, overridden } = b;
    const { startMs, endMs, requestedStartMs } = window;
    const code = saved.code;
    await this.ctx.audit.record(
      {
        actor,
        action: 'run.book',
        entity: 'run',
        entityId: saved.id,
        details: {
          code,
          planId: plan.id,
          planName: plan.name,
          planVersion: plan.version,
          partNumber: type.partNumber,
          lots: lots.map((l) => l.code),
          sampleSize: input.sampleSize,
          sampleId: b.sample.id,
          rig: rig.code,
          scheduledStart: new Date(startMs).toISOString(),
          scheduledEnd: new Date(endMs).toISOString(),
          dueAt: b.terms.dueAt?.toISOString() ?? null,
          priority: b.terms.priority,
          ...(requestedStartMs !== null && startMs !== requestedStartMs
            ? {
                requestedStart: new Date(requestedStartMs).toISOString(),
                slidH: Math.round(((startMs - requestedStartMs) / this.timing.msPerClockH) * 100) / 100,
              }
            : {}),
        },
      },
      m,
    );
    if (overridden) {
      await this.ctx.audit.record(
        {
          actor,
          action: 'run.override',
          entity: 'run',
          entityId: saved.id,
          reason: b.approval?.reason ?? null,
          details: {
            planId: plan.id,
            planVersion: plan.version,
            requestId: b.approval?.id ?? null,
            requestedById: b.approval?.requestedById ?? null,
            approvedById: b.approval?.decidedById ?? null,
            findings: b.findings.map((f) => ({ code: f.code, title: f.title, numbers: f.numbers })),
          },
        },
        m,
      );
    }
  }

  private async newCode(m: EntityManager, kind: string, lotCodes: string[]): Promise<string> {
    const first = (lotCodes[0] ?? 'RUN').replace(/^HG/i, '');
    const stem = `${kind.toUpperCase()}-${first}${lotCodes.length > 1 ? `+${lotCodes.length - 1}` : ''}`.slice(0, 26);
    for (let k = 1; k < 1000; k++) {
      const code = k === 1 ? stem : `${stem}-${k}`;
      if (!(await m.exists(RunEntity, { where: { code } }))) return code;
    }
    throw conflict('Could not find a free run code; try again.');
  }

  // -------------------------------------------------------------------------------------------
  // Socket loading

  async loadSockets(actor: SessionUser, id: string, input: SocketLoadInput): Promise<SocketLoadResult> {
    let result: Omit<SocketLoadResult, 'run'> | null = null;
    let ev: PendingRunEvent | null = null;
    await this.ds.transaction(async (m) => {
      const run = await this.lockRun(m, id, input.rowVersion);
      if (!allowedActions(run.state).includes('load')) {
        throw conflict(
          `Run ${run.code} is ${RUN_STATE_LABEL[run.state].toLowerCase()}; sockets can only be loaded while it is booked or loading.`,
        );
      }
      if (!run.rigId) throw unprocessable(`Run ${run.code} has no rig yet.`);
      const rig = await m.findOneByOrFail(RigEntity, { id: run.rigId });
      if (input.serials && rig.kind !== 'chamber') {
        throw unprocessable(`${rig.code} is a burn-in oven: place each device in a socket (a serial list is for chambers).`);
      }
      const map = input.serials ? await chamberPositions(m, rig, run.id, input.serials) : input.sockets;
      const { flags, assignments } = await this.checkSockets(m, run, rig, map);
      const blocking = flags.filter((f) => f.blocking);
      const loaded = assignments.length;
      const summary = blocking.length
        ? `${blocking.length} socket${blocking.length === 1 ? '' : 's'} need${blocking.length === 1 ? 's' : ''} attention before this map can be stored; first: ${blocking[0].message}`
        : loaded === run.sampleSize
          ? `All ${run.sampleSize} devices are placed; the run can start.`
          : `${loaded} of ${run.sampleSize} devices are placed; ${run.sampleSize - loaded} still to load.`;
      result = {
        stored: false,
        needed: run.sampleSize,
        loaded,
        flags,
        readyToStart: !blocking.length && loaded === run.sampleSize,
        summary,
      };
      if (input.dryRun) return;
      if (blocking.length) throw unprocessable(summary, { flags });
      await m.delete(RunSocketEntity, { runId: run.id });
      if (assignments.length)
        await m.insert(
          RunSocketEntity,
          assignments.map((a) => ({ runId: run.id, socketIndex: a.socket, deviceId: a.deviceId })),
        );
      const details = { loaded, needed: run.sampleSize, empty: flags.filter((f) => f.problem === 'empty').length };
      if (run.state === 'booked') {
        ev = await transitionRun(m, this.deps, run, rig, 'loading', {}, { actor, action: 'run.load', details });
      } else {
        await bumpRunRowVersion(m, run.id);
        await this.ctx.audit.record({ actor, action: 'run.load', entity: 'run', entityId: run.id, details }, m);
      }
      result.stored = true;
    });
    if (ev) emitRunEvent(this.ctx, ev);
    const fresh = await this.ds.getRepository(RunEntity).findOneByOrFail({ id });
    return { ...result!, run: await toRunDetail(this.ds.manager, fresh) };
  }

  /** Flags for a socket → serial map; assignments are the usable rows (stored only when nothing blocks). */
  private async checkSockets(m: EntityManager, run: RunEntity, rig: RigEntity, map: Record<string, string>) {
    const entries = Object.entries(map)
      .map(([k, serial]) => ({ socket: Number(k), serial: serial.trim() }))
      .sort((a, b) => a.socket - b.socket);
    const flags: SocketFlag[] = [];
    const flag = (socket: number, serial: string, problem: SocketFlag['problem'], message: string) =>
      flags.push({ socket, serial, problem, blocking: problem !== 'empty', message });
    const taken = await socketsTakenOnRig(m, rig.id, run.id);
    const runLots = await m.find(RunLotEntity, { where: { runId: run.id } });
    const lotIds = new Set(runLots.map((l) => l.lotId));
    const lots = await m.find(LotEntity, { where: { id: In([...lotIds]) }, order: { code: 'ASC' } });
    const serials = [...new Set(entries.map((e) => e.serial).filter(Boolean))];
    const devices = serials.length ? await devicesBySerial(m, serials) : [];
    const busy = devices.length
      ? await devicesInOpenRuns(
          m,
          devices.map((d) => d.id),
          run.id,
        )
      : [];
    const busyBy = new Map(busy.map((b) => [b.device_id, b.code]));
    const seen = new Map<string, number>();
    const assignments: Array<{ socket: number; deviceId: string }> = [];
    const lotList = lots.map((l) => l.code).join(', ');
    for (const e of entries) {
      if (e.socket >= rig.socketCount) {
        flag(e.socket, e.serial, 'no-such-socket', `Socket ${e.socket} does not exist: ${rig.code} has sockets 0–${rig.socketCount - 1}.`);
        continue;
      }
      if (!e.serial) {
        flag(e.socket, '', 'empty', `Socket ${e.socket} is left empty.`);
        continue;
      }
      if (taken.has(e.socket)) {
        flag(e.socket, e.serial, 'socket-taken', `Socket ${e.socket} of ${rig.code} holds a device of run ${taken.get(e.socket)}.`);
        continue;
      }
      const first = seen.get(e.serial);
      if (first !== undefined) {
        flag(e.socket, e.serial, 'duplicate', `Serial ${e.serial} is in socket ${first} already; one device cannot sit in two sockets.`);
        continue;
      }
      seen.set(e.serial, e.socket);
      const matches = devices.filter((d) => d.serial === e.serial);
      const mine = matches.find((d) => lotIds.has(d.lot_id));
      if (!mine) {
        if (matches.length) {
          flag(
            e.socket,
            e.serial,
            'wrong-lot',
            `Serial ${e.serial} belongs to lot ${matches.map((d) => d.lot_code).join(' / ')}, not to this run's lot${lots.length === 1 ? '' : 's'} ${lotList}.`,
          );
        } else {
          flag(e.socket, e.serial, 'unknown-serial', `Serial ${e.serial} is not registered in any lot.`);
        }
        continue;
      }
      const other = busyBy.get(mine.id);
      if (other) {
        flag(e.socket, e.serial, 'in-other-run', `Device ${e.serial} (${mine.lot_code}) is already loaded in run ${other}.`);
        continue;
      }
      assignments.push({ socket: e.socket, deviceId: mine.id });
    }
    if (assignments.length > run.sampleSize) {
      const extra = assignments[run.sampleSize];
      flag(
        extra.socket,
        entries.find((e) => e.socket === extra.socket)?.serial ?? '',
        'too-many',
        `The run is for ${run.sampleSize} devices; the map places ${assignments.length}.`,
      );
    }
    flags.sort((a, b) => a.socket - b.socket);
    return { flags, assignments };
  }

  // -------------------------------------------------------------------------------------------
  // State changes by people

  private async lockRun(m: EntityManager, id: string, rowVersion: number): Promise<RunEntity> {
    const run = await m.findOne(RunEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
    if (!run) throw notFound('The run');
    if (run.rowVersion !== rowVersion) {
      throw conflict(
        `Run ${run.code} changed since you loaded it (it is now ${RUN_STATE_LABEL[run.state].toLowerCase()}, version ${run.rowVersion}). Reload and try again.`,
        { rowVersion: run.rowVersion, state: run.state },
      );
    }
    return run;
  }

  private refuseAction(run: RunEntity, action: RunAction): AppError {
    return conflict(`Run ${run.code} is ${RUN_STATE_LABEL[run.state].toLowerCase()}; "${RUN_ACTION_LABEL[action]}" is not possible now.`);
  }

  /** The start permit: every check Start makes, and what the person will be asked to confirm. */
  async permit(id: string): Promise<StartPermit> {
    const m = this.ds.manager;
    const run = await m.findOneBy(RunEntity, { id });
    if (!run) throw notFound('The run');
    const rig = run.rigId ? await m.findOneBy(RigEntity, { id: run.rigId }) : null;
    const plan = await m.findOneByOrFail(StressPlanEntity, { id: run.planId });
    return startPermit(m, run, rig, plan, needsOf(plan, run.sampleSize), this.ctx.now().getTime());
  }

  async act(
    actor: SessionUser,
    id: string,
    action: Exclude<RunAction, 'load' | 'abort' | 'start' | 'retry'>,
    input: RunActionInput,
  ): Promise<RunDetail>;
  async act(actor: SessionUser, id: string, action: 'start', input: StartRunInput): Promise<RunDetail>;
  async act(actor: SessionUser, id: string, action: 'abort' | 'retry', input: AbortRunInput | RetryRunInput): Promise<RunDetail>;
  async act(
    actor: SessionUser,
    id: string,
    action: Exclude<RunAction, 'load'>,
    input: RunActionInput | AbortRunInput | StartRunInput | RetryRunInput,
  ): Promise<RunDetail> {
    const events: PendingRunEvent[] = [];
    await this.ds.transaction(async (m) => {
      const run = await this.lockRun(m, id, input.rowVersion);
      if (!allowedActions(run.state).includes(action)) throw this.refuseAction(run, action);
      const rig = run.rigId ? await m.findOneBy(RigEntity, { id: run.rigId }) : null;
      const plan = await m.findOneByOrFail(StressPlanEntity, { id: run.planId });
      const a: ActionContext = { m, actor, run, rig, plan, now: this.ctx.now(), reason: input.reason?.trim() || null };
      switch (action) {
        case 'start':
          if (!('confirm' in input) || input.confirm !== true) {
            throw unprocessable("Confirm the plan's voltage and temperature before starting; nothing was started.");
          }
          events.push(await this.startRun(a));
          break;
        case 'retry':
          events.push(await this.retryRun(a));
          break;
        case 'pause':
          events.push(...(await this.pauseRun(a)));
          break;
        case 'resume':
          events.push(await this.resumeRun(a));
          break;
        case 'measurements-done':
          events.push(await this.measurementsDone(a));
          break;
        case 'abort':
          events.push(await this.abortRun(a));
          break;
      }
    });
    for (const e of events) emitRunEvent(this.ctx, e);
    return this.get(id);
  }

  /** Heating starts over: accrual resumes after the rig's latest stored telemetry. */
  private async reheat({ m, rig, now }: ActionContext): Promise<Partial<RunEntity>> {
    return {
      heatingSince: now,
      accruedToSeq: rig ? (rig.kind === 'chamber' ? await maxChamberSeq(m, rig.id) : await maxSeq(m, rig.id)) : 0,
      accruedToClockS: null,
    };
  }

  private async startRun(a: ActionContext): Promise<PendingRunEvent> {
    const { m, actor, run, rig, plan, now, reason } = a;
    if (!rig) throw unprocessable(`Run ${run.code} has no rig.`);
    const permit = await startPermit(m, run, rig, plan, needsOf(plan, run.sampleSize), now.getTime());
    const failed = permit.checks.filter((c) => !c.ok);
    if (failed.length) {
      throw unprocessable(`Run ${run.code} cannot start: ${failed.map((c) => c.message).join(' ')} Nothing was started.`, { permit });
    }
    return transitionRun(
      m,
      this.deps,
      run,
      rig,
      'heating',
      { startedAt: run.startedAt ?? now, ambientReachedAt: null, ...(await this.reheat(a)) },
      {
        actor,
        action: 'run.start',
        reason,
        details: {
          rig: rig.code,
          setC: plan.chamberC,
          humidityPct: plan.humidityPct,
          confirmed: { chamberC: plan.chamberC, biasV: permit.confirm.biasV, bias: permit.confirm.biasText },
          permit: permit.checks.map((c) => c.message),
        },
      },
    );
  }

  /**
   * Leave the fault state after the cause was fixed: the run heats again (new command ids, so the
   * rig gets fresh commands) and the same permit checks as at start must pass; the person says what
   * was fixed (audited). A rig that still refuses puts the run back into fault.
   */
  private async retryRun(a: ActionContext): Promise<PendingRunEvent> {
    const { m, actor, run, rig, plan, now, reason } = a;
    if (!rig) throw unprocessable(`Run ${run.code} has no rig.`);
    const permit = await startPermit(m, run, rig, plan, needsOf(plan, run.sampleSize), now.getTime());
    const failed = permit.checks.filter((c) => !c.ok);
    if (failed.length) {
      throw unprocessable(`Run ${run.code} cannot heat again yet: ${failed.map((c) => c.message).join(' ')} It stays in fault.`, {
        permit,
      });
    }
    return transitionRun(
      m,
      this.deps,
      run,
      rig,
      'heating',
      { ambientReachedAt: null, ...(await this.reheat(a)) },
      {
        actor,
        action: 'run.retry',
        reason,
        details: { fault: run.faultReason, faultAt: run.faultAt?.toISOString() ?? null, stressHours: run.stressHours },
      },
    );
  }

  /** Pause; a stressing run first counts the telemetry that landed up to now (exact hours). */
  private async pauseRun({ m, actor, run, rig, plan, reason }: ActionContext): Promise<PendingRunEvent[]> {
    const events: PendingRunEvent[] = [];
    if (run.state === 'stressing' && rig) {
      for (let k = 0; k < 20; k++) {
        const out = await accrueStep(m, this.deps, run, plan, rig);
        events.push(...out.events);
        if (out.to)
          throw conflict(`Run ${run.code} reached a read point just now and is ${RUN_STATE_LABEL[run.state].toLowerCase()}; reload.`);
        if (!out.more) break;
      }
    }
    events.push(
      await transitionRun(
        m,
        this.deps,
        run,
        rig,
        'paused',
        {},
        { actor, action: 'run.pause', reason, details: { stressHours: run.stressHours } },
      ),
    );
    return events;
  }

  private async resumeRun(a: ActionContext): Promise<PendingRunEvent> {
    const { m, actor, run, rig, plan, reason } = a;
    if (rig) await this.checkChamberFree(m, run, rig, plan);
    return transitionRun(
      m,
      this.deps,
      run,
      rig,
      'heating',
      { ambientReachedAt: null, ...(await this.reheat(a)) },
      {
        actor,
        action: 'run.resume',
        reason,
        details: { stressHours: run.stressHours },
      },
    );
  }

  private async measurementsDone(a: ActionContext): Promise<PendingRunEvent> {
    const { m, actor, run, rig, plan, reason } = a;
    const rps = [...plan.readPointsH].sort((x, y) => x - y);
    const at = rps[run.nextReadPoint - 1];
    if (run.holdPhase && BIASED_HOLD_PHASES.includes(run.holdPhase)) {
      throw conflict(
        `Run ${run.code} is still under bias (${run.holdPhase === 'oven-shared' ? 'held hot: the oven is shared with a run under stress' : 'cooling under bias'}); measure after bias comes off.`,
      );
    }
    return transitionRun(
      m,
      this.deps,
      run,
      rig,
      'heating',
      { ambientReachedAt: null, holdPhase: null, holdPhaseSince: null, ...(await this.reheat(a)) },
      {
        actor,
        action: 'run.measurements-done',
        reason,
        details: { readPointH: at ?? null, stressHours: run.stressHours },
      },
    );
  }

  private async abortRun({ m, actor, run, rig, now, reason }: ActionContext): Promise<PendingRunEvent> {
    return transitionRun(
      m,
      this.deps,
      run,
      rig,
      'aborted',
      { abortReason: reason, finishedAt: now },
      {
        actor,
        action: 'run.abort',
        reason,
        details: { stressHours: run.stressHours, wasState: run.state },
      },
    );
  }

  /** One chamber condition per oven: runs already heated in it must share the plan's set point. */
  private async checkChamberFree(m: EntityManager, run: RunEntity, rig: RigEntity, plan: StressPlanEntity) {
    const clash = await chamberConflict(m, run, rig, plan);
    if (clash) throw conflict(clash);
  }
}
