/**
 * Make-up planning (issue #25 item 3): when a run's sample lost, excluded or tripped devices, the
 * proposal that restores the plan's demonstrated LTPD (shared/verdict/make-up.ts), the earliest rig
 * time from the booking proposals (RunsService.propose, the one scheduler), and booking the make-up
 * into the same sample so the verdict judges it with the original as one sample.
 *
 * A run over several lots: the verdict judges each lot on its own — that lot's devices of the sample
 * against the plan's n and c, never pooled (shared/verdict/judge.ts judgePlan; the evidence takes a
 * lot's devices only, server/modules/analytics/part-analysis.ts lotRunDevices). So each lot is
 * proposed on its own figures, and each lot made up gets a run of its own (booked for that lot alone,
 * so its sockets take only that lot's devices), all booked in one step on one rig side by side.
 */
import { In } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import type {
  MakeUpBookInput,
  MakeUpBooking,
  MakeUpLostDevice,
  MakeUpLotView,
  MakeUpStatusView,
  MakeUpView,
} from '../../../shared/schemas/make-up';
import { demonstratedLtpd } from '../../../shared/reliability';
import { LTPD_CONFIDENCE } from '../../../shared/verdict/rules';
import { MAKE_UP_RULE, proposeMakeUp } from '../../../shared/verdict/make-up';
import type { AppContext } from '../../context';
import { LotEntity, RunEntity, RunLotEntity, SampleEntity, StressPlanEntity } from '../../db/entities';
import { conflict, notFound, unprocessable } from '../../http/errors';
import { freshDevicesInLot } from './make-up.data';

/** Which lot state speaks for the whole run when no lot has a make-up to book (most serious first). */
const STATUS_ORDER: readonly MakeUpStatusView[] = ['possible', 'failed-already', 'too-few-fresh', 'nothing-to-restore', 'unavailable'];

const STATUS_WORDS: Record<MakeUpStatusView, string> = {
  possible: 'make-up',
  'failed-already': 'failed already, no make-up',
  'too-few-fresh': 'too few fresh devices',
  'nothing-to-restore': 'nothing to restore',
  unavailable: 'judged on another sample',
};

interface SampleContext {
  run: RunEntity;
  plan: StressPlanEntity;
  sample: SampleEntity;
  /** The sample's runs not started yet (not aborted) and the lots each was booked for. */
  notStartedRuns: Array<{ run: RunEntity; lotIds: string[] }>;
}

export class MakeUpService {
  constructor(private readonly ctx: AppContext) {}

  async proposal(runId: string): Promise<MakeUpView> {
    const m = this.ctx.ds.manager;
    const run = await m.findOne(RunEntity, { where: { id: runId } });
    if (!run) throw notFound('The run');
    const plan = await m.findOneByOrFail(StressPlanEntity, { id: run.planId });
    const sample = run.sampleId ? await m.findOneBy(SampleEntity, { id: run.sampleId }) : null;
    const runLots = await m.find(RunLotEntity, { where: { runId } });
    const lots = runLots.length ? await m.find(LotEntity, { where: { id: In(runLots.map((l) => l.lotId)) }, order: { code: 'ASC' } }) : [];
    const view: MakeUpView = {
      runId: run.id,
      runCode: run.code,
      sampleId: run.sampleId,
      plan: { id: plan.id, name: plan.name, sampleSize: plan.sampleSize, acceptNumber: plan.acceptNumber },
      confidence: LTPD_CONFIDENCE,
      status: 'unavailable',
      explanation: '',
      rule: MAKE_UP_RULE,
      sampleBookedSize: sample?.bookedSize ?? run.sampleSize,
      lost: [],
      planLtpd: demonstratedLtpd({
        sampleSize: plan.sampleSize,
        acceptNumber: Math.min(plan.acceptNumber, plan.sampleSize - 1),
        confidence: LTPD_CONFIDENCE,
      }),
      makeUpSize: 0,
      lots: [],
      slot: null,
      slotProblems: [],
      needsOverride: false,
    };
    const unavailable = (explanation: string): MakeUpView => ({ ...view, explanation });
    if (run.state === 'aborted')
      return unavailable(`Run ${run.code} was aborted; its devices are not judged, so there is nothing to make up.`);
    if (!sample) return unavailable(`Run ${run.code} has no sample record; book a make-up by hand.`);
    if (!lots.length) return unavailable(`Run ${run.code} names no lot; book a make-up by hand.`);

    const sampleRuns = await m.find(RunEntity, { where: { sampleId: sample.id } });
    const waiting = sampleRuns.filter((r) => r.startedAt === null && r.state !== 'aborted');
    const waitingLots = waiting.length ? await m.find(RunLotEntity, { where: { runId: In(waiting.map((r) => r.id)) } }) : [];
    const sc: SampleContext = {
      run,
      plan,
      sample,
      notStartedRuns: waiting.map((r) => ({ run: r, lotIds: waitingLots.filter((l) => l.runId === r.id).map((l) => l.lotId) })),
    };
    const parts: Array<{ view: MakeUpLotView; lost: MakeUpLostDevice[] }> = [];
    for (const lot of lots) parts.push(await this.lotPart(sc, lot));
    const lotViews = parts.map((p) => p.view);
    const status = STATUS_ORDER.find((s) => lotViews.some((l) => l.status === s)) ?? 'unavailable';
    const possible = lotViews.filter((l) => l.status === 'possible');
    const out: MakeUpView = {
      ...view,
      status,
      lots: lotViews,
      lost: parts.flatMap((p) => p.lost),
      makeUpSize: possible.reduce((n, l) => n + l.makeUpSize, 0),
      explanation: lotViews.length === 1 ? lotViews[0].explanation : severalLotsExplanation(run, plan, lotViews),
    };
    if (status !== 'possible') return out;
    // The earliest rig time from the booking proposals (the one scheduler), for all the lots' make-up
    // devices at once: the lots' runs then stand side by side on that rig (same plan, same start, same holds).
    const proposals = await this.ctx.services.runs.propose({
      planId: plan.id,
      lotIds: possible.map((l) => l.lot.id),
      sampleSize: out.makeUpSize,
    });
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

  /** One lot's figures and make-up, from the lot's own judgement of this plan (the verdict's sample for the lot). */
  private async lotPart(sc: SampleContext, lot: LotEntity): Promise<{ view: MakeUpLotView; lost: MakeUpLostDevice[] }> {
    const { run, plan } = sc;
    const base: MakeUpLotView = {
      lot: { id: lot.id, code: lot.code },
      status: 'unavailable',
      explanation: '',
      booked: 0,
      valid: 0,
      failures: 0,
      lostCount: 0,
      ltpdNow: null,
      makeUpSize: 0,
      restoredLtpd: null,
      noFailureRoom: false,
      freshInLot: 0,
      notStarted: 0,
    };
    const judged = await this.ctx.services.analytics.lotJudgement(lot.id);
    const pj = judged?.judgement.plans.find((p) => p.runs.some((r) => r.runId === run.id));
    const pe = judged?.evidence.plans.find((p) => p.runs.some((r) => r.runId === run.id));
    if (!pj || !pe) {
      return {
        view: {
          ...base,
          explanation: `Lot ${lot.code} is judged on another sample of this plan; run ${run.code}'s devices do not count towards its verdict.`,
        },
        lost: [],
      };
    }
    const tripsOpen = new Set(
      pe.devices.filter((d) => d.trip && !d.dispositions.some((x) => x.kind === 'reseated')).map((d) => `${d.runId}:${d.deviceId}`),
    );
    const codeOf = new Map(pj.runs.map((r) => [r.runId, r.runCode]));
    const lost: MakeUpLostDevice[] = [];
    for (const d of pj.devices) {
      const runCode = codeOf.get(d.runId) ?? run.code;
      const at = { serial: d.serial, runCode, lotCode: lot.code };
      if (d.status === 'removed') lost.push({ ...at, kind: 'removed', why: d.removedBecause ?? 'left the sample' });
      else if (d.status !== 'fail' && tripsOpen.has(`${d.runId}:${d.deviceId}`)) {
        const ev = pe.devices.find((x) => x.deviceId === d.deviceId && x.runId === d.runId)!;
        lost.push({
          ...at,
          kind: 'tripped',
          why: `socket tripped at ${Math.round(ev.trip!.atH)} h${ev.trip!.reason ? ` (${ev.trip!.reason})` : ''}; failure, re-seat or exclusion not yet recorded`,
        });
      }
    }
    lost.sort((a, b) => a.serial.localeCompare(b.serial));
    // The lot's devices are the verdict's count (pj.sample.booked: this lot's devices placed in the
    // sample's runs). Runs of the sample not started yet (a make-up booked already) fill the sample
    // but demonstrate nothing yet: their placed devices of this lot, or, for a run booked for this
    // lot alone, its booked size when fewer are placed so far.
    let notStarted = 0;
    let unplaced = 0;
    for (const w of sc.notStartedRuns) {
      if (!w.lotIds.includes(lot.id)) continue;
      const placed = pj.devices.filter((d) => d.runId === w.run.id).length;
      const counted = w.lotIds.length === 1 ? Math.max(w.run.sampleSize, placed) : placed;
      notStarted += counted;
      unplaced += counted - placed;
    }
    const booked = pj.sample.booked + unplaced;
    const freshInLot = await freshDevicesInLot(this.ctx.ds.manager, lot.id);
    const p = proposeMakeUp({
      planned: plan.sampleSize,
      acceptNumber: plan.acceptNumber,
      confidence: LTPD_CONFIDENCE,
      booked,
      removed: lost.filter((x) => x.kind === 'removed').length,
      undecidedTrips: lost.filter((x) => x.kind === 'tripped').length,
      failures: pj.sample.failures,
      freshInLot,
      notStarted,
    });
    return {
      view: {
        ...base,
        status: p.status,
        explanation: p.explanation,
        booked,
        valid: p.valid,
        failures: pj.sample.failures,
        lostCount: lost.length,
        ltpdNow: p.ltpdNow,
        makeUpSize: p.makeUpSize,
        restoredLtpd: p.restoredLtpd,
        noFailureRoom: p.noFailureRoom,
        freshInLot,
        notStarted: p.notStarted,
      },
      lost,
    };
  }

  /**
   * Books the make-up into the run's sample in one step: a run per lot made up, on the proposal's rig
   * (engineer; audited once as sample.make-up with each lot's figures).
   */
  async book(actor: SessionUser, runId: string, input: MakeUpBookInput): Promise<MakeUpBooking> {
    const p = await this.proposal(runId);
    if (p.status !== 'possible') throw unprocessable(`No make-up to book for run ${p.runCode}: ${p.explanation}`, { status: p.status });
    const possible = p.lots.filter((l) => l.status === 'possible');
    const sizes = possible.map((l) => `${l.makeUpSize} from lot ${l.lot.code}`).join(', ');
    const asked = input.lots ?? possible.map((l) => ({ lotId: l.lot.id, makeUpSize: l.makeUpSize }));
    const sameLots =
      asked.length === possible.length && possible.every((l) => asked.some((a) => a.lotId === l.lot.id && a.makeUpSize === l.makeUpSize));
    if (p.makeUpSize !== input.makeUpSize || p.sampleBookedSize !== input.sampleBookedSize || !sameLots) {
      throw conflict(
        `The make-up proposal changed: it now asks for ${p.makeUpSize} devices${possible.length > 1 || p.lots.length > 1 ? ` (${sizes})` : ''} with ${p.sampleBookedSize} booked in the sample. Reload and book again.`,
        {
          makeUpSize: p.makeUpSize,
          sampleBookedSize: p.sampleBookedSize,
          lots: possible.map((l) => ({ lotId: l.lot.id, makeUpSize: l.makeUpSize })),
        },
      );
    }
    const original = await this.ctx.ds.manager.findOneOrFail(RunEntity, { where: { id: runId } });
    const runs = await this.ctx.services.runs.bookIntoSample(actor, {
      sampleId: p.sampleId!,
      rigId: input.rigId,
      start: input.start,
      parts: possible.map((l) => ({ lotIds: [l.lot.id], sampleSize: l.makeUpSize })),
      expectedBookedSize: input.sampleBookedSize,
      priority: original.priority,
      override: input.override,
      details: {
        makeUpFor: p.runCode,
        makeUpSize: p.makeUpSize,
        lost: p.lost.map((d) => d.serial),
        planLtpd: p.planLtpd,
        lots: possible.map((l) => ({
          lot: l.lot.code,
          makeUpSize: l.makeUpSize,
          valid: l.valid,
          failures: l.failures,
          ltpdNow: l.ltpdNow,
          restoredLtpd: l.restoredLtpd,
          lost: p.lost.filter((d) => d.lotCode === l.lot.code).map((d) => d.serial),
        })),
        rule: p.rule,
      },
    });
    return { runs };
  }
}

/** The whole run's words when it holds several lots: each lot judged on its own, and what each needs. */
function severalLotsExplanation(run: RunEntity, plan: StressPlanEntity, lots: MakeUpLotView[]): string {
  const possible = lots.filter((l) => l.status === 'possible');
  const each = `Run ${run.code} holds ${lots.length} lots; the verdict judges each on its own against the plan's ${plan.sampleSize} devices at accept number ${plan.acceptNumber}.`;
  const what = possible.length
    ? `Make-up: ${possible.map((l) => `${l.makeUpSize} fresh ${l.makeUpSize === 1 ? 'device' : 'devices'} from lot ${l.lot.code}`).join(', ')}, each lot in a run of its own.`
    : 'No lot has a make-up to book.';
  const others = lots.filter((l) => l.status !== 'possible').map((l) => `lot ${l.lot.code}: ${STATUS_WORDS[l.status]}`);
  return `${each} ${what}${others.length ? ` Others — ${others.join('; ')}.` : ''}`;
}
