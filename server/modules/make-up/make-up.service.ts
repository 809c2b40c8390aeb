/**
 * Make-up planning (issue #25 item 3): when a run's sample lost, excluded or tripped devices, the
 * proposal that restores the plan's demonstrated LTPD (shared/verdict/make-up.ts), the earliest rig
 * time from the booking proposals (RunsService.propose, the one scheduler), and booking the make-up
 * run into the same sample so the verdict judges it with the original as one sample.
 */
import type { SessionUser } from '../../../shared/schemas/auth';
import type { MakeUpBookInput, MakeUpLostDevice, MakeUpView } from '../../../shared/schemas/make-up';
import type { RunDetail } from '../../../shared/schemas/runs';
import { LTPD_CONFIDENCE } from '../../../shared/verdict/rules';
import { MAKE_UP_RULE, proposeMakeUp } from '../../../shared/verdict/make-up';
import type { AppContext } from '../../context';
import { LotEntity, RunEntity, RunLotEntity, SampleEntity, StressPlanEntity } from '../../db/entities';
import { conflict, notFound, unprocessable } from '../../http/errors';
import { freshDevicesInLot } from './make-up.data';

export class MakeUpService {
  constructor(private readonly ctx: AppContext) {}

  async proposal(runId: string): Promise<MakeUpView> {
    const m = this.ctx.ds.manager;
    const run = await m.findOne(RunEntity, { where: { id: runId } });
    if (!run) throw notFound('The run');
    const plan = await m.findOneOrFail(StressPlanEntity, { where: { id: run.planId } });
    const sample = run.sampleId ? await m.findOne(SampleEntity, { where: { id: run.sampleId } }) : null;
    const runLots = await m.find(RunLotEntity, { where: { runId } });
    const lot = runLots.length === 1 ? await m.findOne(LotEntity, { where: { id: runLots[0].lotId } }) : null;
    const view: MakeUpView = {
      runId: run.id,
      runCode: run.code,
      sampleId: run.sampleId,
      lot: lot ? { id: lot.id, code: lot.code } : null,
      plan: { id: plan.id, name: plan.name, sampleSize: plan.sampleSize, acceptNumber: plan.acceptNumber },
      confidence: LTPD_CONFIDENCE,
      status: 'unavailable',
      explanation: '',
      rule: MAKE_UP_RULE,
      sampleBookedSize: sample?.bookedSize ?? run.sampleSize,
      valid: 0,
      failures: 0,
      lost: [],
      planLtpd: 0,
      ltpdNow: null,
      makeUpSize: 0,
      restoredLtpd: null,
      noFailureRoom: false,
      freshInLot: 0,
      notStarted: 0,
      slot: null,
      slotProblems: [],
      needsOverride: false,
    };
    const unavailable = (explanation: string): MakeUpView => ({ ...view, explanation });
    if (run.state === 'aborted')
      return unavailable(`Run ${run.code} was aborted; its devices are not judged, so there is nothing to make up.`);
    if (!sample) return unavailable(`Run ${run.code} has no sample record; book a make-up by hand.`);
    if (!lot) return unavailable(`Run ${run.code} holds devices of several lots; plan a make-up per lot by hand.`);
    const judged = await this.ctx.services.analytics.lotJudgement(lot.id);
    const pj = judged?.judgement.plans.find((p) => p.runs.some((r) => r.runId === run.id));
    const pe = judged?.evidence.plans.find((p) => p.runs.some((r) => r.runId === run.id));
    if (!pj || !pe) {
      return unavailable(
        `Lot ${lot.code} is judged on another sample of this plan; run ${run.code}'s devices do not count towards its verdict.`,
      );
    }
    const tripsOpen = new Set(
      pe.devices.filter((d) => d.trip && !d.dispositions.some((x) => x.kind === 'reseated')).map((d) => `${d.runId}:${d.deviceId}`),
    );
    const codeOf = new Map(pj.runs.map((r) => [r.runId, r.runCode]));
    const lost: MakeUpLostDevice[] = [];
    for (const d of pj.devices) {
      const runCode = codeOf.get(d.runId) ?? run.code;
      if (d.status === 'removed') lost.push({ serial: d.serial, runCode, kind: 'removed', why: d.removedBecause ?? 'left the sample' });
      else if (d.status !== 'fail' && tripsOpen.has(`${d.runId}:${d.deviceId}`)) {
        const ev = pe.devices.find((x) => x.deviceId === d.deviceId && x.runId === d.runId)!;
        lost.push({
          serial: d.serial,
          runCode,
          kind: 'tripped',
          why: `socket tripped at ${Math.round(ev.trip!.atH)} h${ev.trip!.reason ? ` (${ev.trip!.reason})` : ''}; failure, re-seat or exclusion not yet recorded`,
        });
      }
    }
    lost.sort((a, b) => a.serial.localeCompare(b.serial));
    const freshInLot = await freshDevicesInLot(m, lot.id);
    // Runs of the sample not started yet (a make-up booked already): their devices fill the sample but demonstrate nothing yet.
    const notStarted = (await m.find(RunEntity, { where: { sampleId: sample.id } }))
      .filter((r) => r.startedAt === null && r.state !== 'aborted')
      .reduce((n, r) => n + r.sampleSize, 0);
    const p = proposeMakeUp({
      planned: plan.sampleSize,
      acceptNumber: plan.acceptNumber,
      confidence: LTPD_CONFIDENCE,
      booked: sample.bookedSize,
      removed: lost.filter((x) => x.kind === 'removed').length,
      undecidedTrips: lost.filter((x) => x.kind === 'tripped').length,
      failures: pj.sample.failures,
      freshInLot,
      notStarted,
    });
    const out: MakeUpView = {
      ...view,
      status: p.status,
      explanation: p.explanation,
      valid: p.valid,
      failures: pj.sample.failures,
      lost,
      planLtpd: p.planLtpd,
      ltpdNow: p.ltpdNow,
      makeUpSize: p.makeUpSize,
      restoredLtpd: p.restoredLtpd,
      noFailureRoom: p.noFailureRoom,
      freshInLot,
      notStarted: p.notStarted,
    };
    if (p.status !== 'possible') return out;
    // The earliest rig time from the booking proposals (the one scheduler).
    const proposals = await this.ctx.services.runs.propose({ planId: plan.id, lotIds: [lot.id], sampleSize: p.makeUpSize });
    // The earliest start, on a rig that is online when one can take it.
    const byStart = [...proposals.options].sort((a, b) => a.start.localeCompare(b.start));
    const earliest = byStart.find((o) => o.online) ?? byStart[0] ?? null;
    return {
      ...out,
      slot: earliest
        ? { rigId: earliest.rigId, rigCode: earliest.rigCode, rigName: earliest.rigName, start: earliest.start, end: earliest.end }
        : null,
      slotProblems: [
        ...proposals.problems,
        ...proposals.blockingFindings.map((f) => `${f.title}: ${f.explanation}`),
        ...(earliest || proposals.problems.length ? [] : proposals.refusals.map((r) => `${r.rigCode}: ${r.reasons.join(' ')}`)),
      ],
      needsOverride: proposals.blockingFindings.length > 0,
    };
  }

  /** Books the make-up run into the run's sample in one step (engineer; audited as sample.make-up). */
  async book(actor: SessionUser, runId: string, input: MakeUpBookInput): Promise<RunDetail> {
    const p = await this.proposal(runId);
    if (p.status !== 'possible') throw unprocessable(`No make-up to book for run ${p.runCode}: ${p.explanation}`, { status: p.status });
    if (p.makeUpSize !== input.makeUpSize || p.sampleBookedSize !== input.sampleBookedSize) {
      throw conflict(
        `The make-up proposal changed: it now asks for ${p.makeUpSize} devices with ${p.sampleBookedSize} booked in the sample. Reload and book again.`,
        { makeUpSize: p.makeUpSize, sampleBookedSize: p.sampleBookedSize },
      );
    }
    const original = await this.ctx.ds.manager.findOneOrFail(RunEntity, { where: { id: runId } });
    return this.ctx.services.runs.bookIntoSample(actor, {
      sampleId: p.sampleId!,
      lotIds: [p.lot!.id],
      part: { rigId: input.rigId, start: input.start, sampleSize: p.makeUpSize },
      expectedBookedSize: input.sampleBookedSize,
      priority: original.priority,
      override: input.override,
      details: {
        makeUpFor: p.runCode,
        makeUpSize: p.makeUpSize,
        valid: p.valid,
        failures: p.failures,
        lost: p.lost.map((d) => d.serial),
        ltpdNow: p.ltpdNow,
        planLtpd: p.planLtpd,
        rule: p.rule,
      },
    });
  }
}
