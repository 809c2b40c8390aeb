/**
 * Re-planning when a rig drops out (issue #26 item 3). When a rig goes offline (its last will, or
 * the offline sweep after OFFLINE_AFTER_MS of silence) or gets a maintenance window over its
 * bookings, each booked run it held is re-proposed:
 *   move     — on another rig that can take it: active and online, the plan's chamber, humidity,
 *              bias and socket count within what the rig does (rigRefusals), calibration valid
 *              through the proposed end, the window free of maintenance and of runs at other
 *              conditions (rigRefusals with the window — the same rule booking applies);
 *   in-place — on its own rig: after the maintenance window, or (for an offline rig) once it
 *              reports again.
 * Each proposal carries the delay of its finish against the run's due date (when the calendar
 * gives it one) or else against its booked finish. An engineer or a manager accepts one
 * (audited); a proposal that went stale (the run changed, a newer set replaced it, the window is
 * no longer free) is refused with the reason and nothing changes.
 *
 * Running runs are not moved: their devices sit in the oven with hours already credited. A lost
 * rig's run keeps its state and takes the existing handling — a command the rig cannot confirm
 * puts it into `fault` (scheduler.reportFailure). Hours: only what the rig's stored samples show is
 * credited; a silent gap credits nothing (accrual: a gap counts 0 s), and samples the rig kept in
 * its outbox while the link was down count when they arrive, at the conditions they record.
 */
import type { EntityManager } from 'typeorm';
import { calibrationExpiresAt, chamberSetpointC } from '../../../shared/domain/standards';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { DelayBasis, HeldRun, ReplanKind, ReplanList, ReplanProposal, ReplanState } from '../../../shared/schemas/replan';
import {
  earliestSlot,
  latenessH,
  planBiasV,
  proposeRigs,
  runDurationMs,
  rigRefusals,
  when,
  type RigCapability,
  type RunNeeds,
} from '../../../shared/scheduling';
import type { AppContext } from '../../context';
import type { ReplanProposalEntity, RigEntity, RunEntity, StressPlanEntity } from '../../db/entities';
import { conflict, notFound } from '../../http/errors';
import { loadSchedulingInputs, timingFrom, type SchedulingInputs } from '../runs/scheduling-data';
import * as data from './replan.data';

/** Move proposals kept per run (best finish first). */
export const MOVE_OPTIONS_PER_RUN = 2;
const H = 3_600_000;

export type ReplanTrigger = { kind: 'offline' | 'maintenance' | 'online'; why: string };

/** A run's needs from its plan (the oven is aimed at the band's middle: chamberSetpointC). */
export function runNeeds(run: RunEntity, plan: StressPlanEntity): RunNeeds {
  return {
    chamberC: chamberSetpointC(plan.chamberC, plan.chamberBand),
    humidityPct: plan.humidityPct,
    biasV: planBiasV(plan),
    sampleSize: run.sampleSize,
    durationH: plan.durationH,
    readPointsH: plan.readPointsH,
  };
}

/** Why a rig may not take a moved run now; empty when it may. Static checks, online, calibration through `endMs`. */
export function moveRefusals(rig: RigEntity, needs: RunNeeds, endMs: number): string[] {
  const out = rigRefusals(rig, needs);
  if (!rig.online) out.push(`Oven ${rig.code} is offline.`);
  if (!rig.calibrationDueAt) out.push(`No calibration is recorded for ${rig.code}.`);
  else if (calibrationExpiresAt(rig.calibrationDueAt).getTime() <= endMs) {
    out.push(
      `The calibration of ${rig.code} runs out on ${when(calibrationExpiresAt(rig.calibrationDueAt).getTime())}, before the run would end.`,
    );
  }
  return out;
}

/** The run's due date from its request (calendar: runs.due_at); without one the delay is measured against the booked finish. */
function dueDateOf(run: RunEntity): Date | null {
  return run.dueAt ?? null;
}

/**
 * The proposal's lateness against the due date or else the booked finish (shared/scheduling/lateness.ts),
 * signed (an early finish shows as early) and in wall hours: the list sets it beside wall dates.
 */
function delayOf(run: RunEntity, endMs: number): { dueAt: Date | null; delayBasis: DelayBasis; delayH: number } {
  const due = dueDateOf(run);
  const basisMs = due?.getTime() ?? run.scheduledEnd?.getTime() ?? endMs;
  return { dueAt: due, delayBasis: due ? 'due-date' : 'booked-finish', delayH: latenessH(endMs, basisMs, H) };
}

export function toProposal(r: data.ProposalRow): ReplanProposal {
  return {
    id: r.id,
    runId: r.runId,
    runCode: r.runCode,
    kind: r.kind,
    state: r.state,
    reason: r.reason,
    fromRigCode: r.fromRigCode,
    toRigCode: r.toRigCode,
    fromStart: r.fromStart?.toISOString() ?? null,
    fromEnd: r.fromEnd?.toISOString() ?? null,
    startAt: r.startAt.toISOString(),
    endAt: r.endAt.toISOString(),
    dueAt: r.dueAt?.toISOString() ?? null,
    delayBasis: r.delayBasis,
    delayH: r.delayH,
    createdAt: r.createdAt.toISOString(),
    decidedBy: r.decidedByName,
    decidedAt: r.decidedAt?.toISOString() ?? null,
  };
}

export class ReplanService {
  private chain: Promise<unknown> = Promise.resolve();

  constructor(private readonly ctx: AppContext) {}

  private get timing() {
    return timingFrom(this.ctx.config);
  }

  /** Re-plans run one after another in this process (and under an advisory lock across processes). */
  enqueue(rigId: string, trigger: ReplanTrigger): Promise<number> {
    const next = this.chain.then(() => this.proposeForRig(rigId, trigger));
    this.chain = next.catch(() => undefined);
    return next;
  }

  /**
   * New proposals for the booked runs a rig holds. Offline: every booked run, moves only.
   * Maintenance: the booked runs whose window meets a maintenance window, in place and moves.
   * Back online: the runs that still have open proposals, in place and moves (a fresh set).
   * Returns the number of runs re-proposed.
   */
  async proposeForRig(rigId: string, trigger: ReplanTrigger): Promise<number> {
    const nowMs = this.ctx.now().getTime();
    const t = this.timing;
    return this.ctx.ds.transaction(async (m) => {
      await data.lockReplanning(m);
      const rig = await data.findRig(m, rigId);
      if (!rig) return 0;
      const inputs = await loadSchedulingInputs(m, nowMs, t);
      let runs = await data.bookedRunsOnRig(m, rigId);
      if (trigger.kind === 'online') {
        const open = new Set(await data.runsWithOpenProposals(m, rigId));
        runs = runs.filter((r) => open.has(r.id));
      }
      let count = 0;
      for (const run of runs) {
        const plan = inputs.plans.get(run.planId);
        if (!plan) continue;
        const needs = runNeeds(run, plan);
        const others = inputs.commitments.filter((c) => c.runId !== run.id);
        const notBefore = Math.max(nowMs, run.scheduledStart?.getTime() ?? nowMs);
        if (trigger.kind === 'maintenance') {
          const end = notBefore + runDurationMs(needs, t);
          const hit = rigRefusals(
            rig,
            needs,
            { startMs: notBefore, endMs: end, commitments: [], maintenance: inputs.maintenance, timing: t },
            'window',
          );
          if (!hit.length) continue;
        }
        const rows = this.optionsFor(run, rig, needs, inputs, others, notBefore, trigger, nowMs);
        if (!rows.length) continue;
        await data.supersedeOpen(m, run.id);
        await data.insertProposals(m, rows);
        await this.ctx.audit.record(
          {
            actor: 'system',
            action: 'run.replan-proposed',
            entity: 'run',
            entityId: run.id,
            reason: trigger.why,
            details: {
              rig: rig.code,
              options: rows.map((r) => ({
                kind: r.kind,
                toRigId: r.toRigId,
                startAt: r.startAt!.toISOString(),
                endAt: r.endAt!.toISOString(),
                delayH: r.delayH,
              })),
            },
          },
          m,
        );
        count++;
      }
      return count;
    });
  }

  private optionsFor(
    run: RunEntity,
    rig: RigEntity,
    needs: RunNeeds,
    inputs: SchedulingInputs,
    others: SchedulingInputs['commitments'],
    notBefore: number,
    trigger: ReplanTrigger,
    nowMs: number,
  ): Array<Partial<ReplanProposalEntity>> {
    const t = this.timing;
    const base = (kind: ReplanKind, toRigId: string, startMs: number, endMs: number): Partial<ReplanProposalEntity> => ({
      runId: run.id,
      kind,
      state: 'open' satisfies ReplanState,
      reason: trigger.why,
      fromRigId: rig.id,
      toRigId,
      fromStart: run.scheduledStart,
      fromEnd: run.scheduledEnd,
      startAt: new Date(startMs),
      endAt: new Date(endMs),
      runRowVersion: run.rowVersion,
      ...delayOf(run, endMs),
    });
    const rows: Array<Partial<ReplanProposalEntity>> = [];
    if (trigger.kind !== 'offline' && rig.online) {
      const slot = earliestSlot(rig, needs, notBefore, others, inputs.maintenance, t);
      if (slot && !moveRefusals(rig, needs, slot.endMs).length) rows.push(base('in-place', rig.id, slot.startMs, slot.endMs));
    }
    const endGuess = notBefore + runDurationMs(needs, t);
    const candidates: RigCapability[] = inputs.rigs.filter(
      (g) => g.id !== rig.id && g.active && g.online && !moveRefusals(g, needs, Math.max(endGuess, nowMs)).length,
    );
    const p = proposeRigs(needs, candidates, others, inputs.maintenance, notBefore, t);
    for (const o of p.options) {
      if (rows.filter((r) => r.kind === 'move').length >= MOVE_OPTIONS_PER_RUN) break;
      const target = inputs.rigs.find((g) => g.id === o.rigId)!;
      if (moveRefusals(target, needs, o.endMs).length) continue;
      rows.push(base('move', o.rigId, o.startMs, o.endMs));
    }
    return rows;
  }

  async list(state?: ReplanState): Promise<ReplanList> {
    const m = this.ctx.ds.manager;
    const items = (await data.listProposals(m, state)).map(toProposal);
    const held: HeldRun[] = (await data.heldRuns(m, this.ctx.now())).map((r) => ({
      runId: r.id,
      runCode: r.code,
      rigCode: r.rig_code,
      state: r.state,
      stressHours: Number(r.stress_hours),
      note: `${r.online ? `${r.rig_code} is in maintenance` : `${r.rig_code} is offline`}: the run waits in place with its devices. Only hours the rig's stored samples show are credited; a silent gap credits nothing. A command the rig cannot confirm puts the run into fault.`,
    }));
    return { items, held };
  }

  /** Accept one proposal: the booking moves (audited); a stale proposal is refused and nothing changes. */
  async accept(actor: SessionUser, id: string, note?: string): Promise<ReplanProposal> {
    const nowMs = this.ctx.now().getTime();
    const t = this.timing;
    await this.ctx.ds.transaction(async (m) => {
      await data.lockReplanning(m);
      const p = await data.lockProposal(m, id);
      if (!p) throw notFound('The re-plan proposal');
      const run = await data.lockRun(m, p.runId);
      if (!run) throw notFound('The run');
      if (p.state !== 'open') {
        throw conflict(
          p.state === 'accepted'
            ? `This proposal for ${run.code} was already accepted; nothing was changed.`
            : `This proposal for ${run.code} was replaced by a newer one; nothing was changed. Reload the re-plan list.`,
        );
      }
      if (run.state !== 'booked') {
        throw conflict(`Run ${run.code} is no longer booked (it is ${run.state}); only a booked run moves. Nothing was changed.`);
      }
      if (run.rowVersion !== p.runRowVersion) {
        throw conflict(`Run ${run.code} changed since this proposal was made; nothing was changed. Reload the re-plan list.`);
      }
      await this.checkTarget(m, run, p, nowMs);
      const durMs = p.endAt.getTime() - p.startAt.getTime();
      // A proposed start that has passed slides to now, keeping the length (checked again in checkTarget).
      const startMs = Math.max(p.startAt.getTime(), nowMs);
      const target = await data.findRig(m, p.toRigId);
      await data.moveBooking(m, run.id, p.toRigId, new Date(startMs), new Date(startMs + durMs));
      await data.markAccepted(m, p.id, actor.id, new Date(nowMs));
      await data.supersedeOpen(m, run.id, p.id);
      await this.ctx.audit.record(
        {
          actor,
          action: 'run.replan',
          entity: 'run',
          entityId: run.id,
          reason: note?.length ? note : p.reason,
          details: {
            proposalId: p.id,
            kind: p.kind,
            trigger: p.reason,
            fromRigId: p.fromRigId,
            toRig: target?.code ?? null,
            fromStart: run.scheduledStart?.toISOString() ?? null,
            toStart: new Date(startMs).toISOString(),
            toEnd: new Date(startMs + durMs).toISOString(),
            slidH: (startMs - p.startAt.getTime()) / t.msPerClockH,
            delayBasis: p.delayBasis,
            delayH: p.delayH,
          },
        },
        m,
      );
    });
    const [row] = await data.listProposals(this.ctx.ds.manager, undefined, [id]);
    return toProposal(row);
  }

  /** The target rig still takes the run in the proposed window (slid to now when it has passed). */
  private async checkTarget(m: EntityManager, run: RunEntity, p: ReplanProposalEntity, nowMs: number): Promise<void> {
    const t = this.timing;
    const inputs = await loadSchedulingInputs(m, nowMs, t, run.id);
    const rig = inputs.rigs.find((g) => g.id === p.toRigId);
    if (!rig) throw conflict('The proposed rig no longer exists; nothing was changed.');
    const needs = runNeeds(run, await data.findPlan(m, run.planId));
    const startMs = Math.max(p.startAt.getTime(), nowMs);
    const endMs = startMs + (p.endAt.getTime() - p.startAt.getTime());
    const reasons = [
      ...moveRefusals(rig, needs, endMs),
      ...rigRefusals(rig, needs, { startMs, endMs, commitments: inputs.commitments, maintenance: inputs.maintenance, timing: t }, 'window'),
    ];
    if (reasons.length) {
      throw conflict(
        `${rig.code} can no longer take ${run.code} at ${when(startMs)}: ${reasons.join(' ')} Nothing was changed; ask for a new re-plan.`,
        {
          reasons,
        },
      );
    }
  }
}
