/**
 * Safety approvals (issue #21 item 3): booking a plan whose check blocks needs an override that
 * one engineer asks for (with a reason) and a second person decides — someone holding the
 * per-user safety-approval grant who is not the one who asked. Findings flagged `neverOverride` in
 * the plan-rule table (reverse bias beyond the rated BVCBO or BVEBO) are never overridable. An
 * approved request is used by one booking. Each step is audited with the overridden numbers.
 */
import { In, type DataSource, type EntityManager } from 'typeorm';
import { isOverridable } from '../../../shared/safety/plan-rules/types';
import type {
  OverriddenFinding,
  OverrideDecisionInput,
  OverrideRequest,
  OverrideRequestInput,
  OverrideRequestState,
} from '../../../shared/schemas/approvals';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { CheckFinding, PlanCheckResult } from '../../../shared/schemas/plans';
import { DeviceTypeEntity, OverrideRequestEntity, StressPlanEntity, UserEntity } from '../../db/entities';
import { conflict, forbidden, notFound, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { toDeviceTypeInput } from '../device-types/device-types.service';
import { runPlanCheck } from '../plans/plan-check-result';
import { toPlanInput } from '../plans/plans.service';

export interface BlockingFinding extends OverriddenFinding {
  explanation: string;
  neverOverride: boolean;
}

/**
 * The plan version's blocking findings: its stored check, with the never-override flag also taken
 * from a check against the device's current ratings (a check stored before the flag existed, or
 * ratings corrected since, must not let an avalanche plan through).
 */
export function blockingFindings(plan: StressPlanEntity, type: DeviceTypeEntity, at: Date): BlockingFinding[] {
  const fresh = runPlanCheck({ id: type.id, ...toDeviceTypeInput(type) }, toPlanInput(plan), at);
  const stored: PlanCheckResult = plan.checkResult ?? fresh;
  const freshNever = new Set(fresh.findings.filter((f) => f.severity === 'block' && !isOverridable(f)).map((f) => f.code));
  const blocks = stored.findings.filter((f) => f.severity === 'block');
  // A finding that blocks now but did not when the version was stored is never waved through unseen.
  for (const f of fresh.findings) if (f.severity === 'block' && !blocks.some((b) => b.code === f.code)) blocks.push(f);
  return blocks.map((f: CheckFinding) => ({
    code: f.code,
    title: f.title,
    explanation: f.explanation,
    numbers: f.numbers,
    neverOverride: !isOverridable(f) || freshNever.has(f.code),
  }));
}

const frozen = (f: BlockingFinding): OverriddenFinding => ({ code: f.code, title: f.title, numbers: f.numbers });

export const neverOverridableMessage = (plan: StressPlanEntity, never: BlockingFinding[]): string =>
  `"${plan.name}" (version ${plan.version}) cannot be overridden: ${never.map((f) => f.title).join('; ')}. ` +
  'Reverse bias beyond the rated breakdown drives every part into avalanche; no approval can allow it. Change the plan.';

export class ApprovalsService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
    private readonly now: () => Date,
  ) {}

  private async planAndType(m: EntityManager, planId: string) {
    const plan = await m.findOneBy(StressPlanEntity, { id: planId });
    if (!plan) throw notFound('The plan');
    const type = await m.findOneByOrFail(DeviceTypeEntity, { id: plan.deviceTypeId });
    return { plan, type };
  }

  async request(actor: SessionUser, input: OverrideRequestInput): Promise<OverrideRequest> {
    const id = await this.ds.transaction(async (m) => {
      const { plan, type } = await this.planAndType(m, input.planId);
      // One open request per plan version at a time: two engineers asking at once queue on the plan row.
      await m.findOne(StressPlanEntity, { where: { id: plan.id }, lock: { mode: 'pessimistic_write' } });
      const blocks = blockingFindings(plan, type, this.now());
      if (!blocks.length)
        throw unprocessable(`The plan check of "${plan.name}" (version ${plan.version}) blocks nothing; book it as it is.`);
      const never = blocks.filter((f) => f.neverOverride);
      if (never.length) throw unprocessable(neverOverridableMessage(plan, never), { neverOverride: never.map((f) => f.code) });
      const open = await m.findOne(OverrideRequestEntity, { where: { planId: plan.id, state: In(['pending', 'approved']) } });
      if (open) {
        throw conflict(
          `An override of "${plan.name}" (version ${plan.version}) is already ${open.state === 'pending' ? 'waiting for approval' : 'approved and not yet used'}.`,
        );
      }
      const saved = await m.save(
        m.create(OverrideRequestEntity, {
          planId: plan.id,
          state: 'pending',
          findings: blocks.map(frozen),
          reason: input.reason,
          requestedById: actor.id,
          requestedAt: this.now(),
        }),
      );
      await this.audit.record(
        {
          actor,
          action: 'override.request',
          entity: 'plan',
          entityId: plan.id,
          reason: input.reason,
          details: { requestId: saved.id, planName: plan.name, planVersion: plan.version, findings: saved.findings },
        },
        m,
      );
      return saved.id;
    });
    return this.get(id);
  }

  async get(id: string): Promise<OverrideRequest> {
    const r = await this.ds.getRepository(OverrideRequestEntity).findOneBy({ id });
    if (!r) throw notFound('The override request');
    return (await this.views([r]))[0];
  }

  async list(q: { state?: OverrideRequestState; planId?: string }): Promise<OverrideRequest[]> {
    const rows = await this.ds.getRepository(OverrideRequestEntity).find({
      where: { ...(q.state ? { state: q.state } : {}), ...(q.planId ? { planId: q.planId } : {}) },
      order: { requestedAt: 'DESC' },
      take: 200,
    });
    return this.views(rows);
  }

  async holdsGrant(actor: SessionUser): Promise<boolean> {
    const me = await this.ds.getRepository(UserEntity).findOneBy({ id: actor.id });
    return !!me?.safetyApprover;
  }

  async decide(actor: SessionUser, id: string, input: OverrideDecisionInput): Promise<OverrideRequest> {
    await this.ds.transaction(async (m) => {
      const me = await m.findOneByOrFail(UserEntity, { id: actor.id });
      if (!me.safetyApprover) {
        throw forbidden('Deciding a safety override needs the safety-approval permission; an administrator grants it on People.');
      }
      const r = await m.findOne(OverrideRequestEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!r) throw notFound('The override request');
      if (r.requestedById === actor.id) {
        throw forbidden('You asked for this override; a second person holding the safety approval must decide it.');
      }
      if (r.state !== 'pending') throw conflict(`This override request was already decided (${r.state}).`);
      const { plan, type } = await this.planAndType(m, r.planId);
      const never = blockingFindings(plan, type, this.now()).filter((f) => f.neverOverride);
      if (input.decision === 'approve' && never.length) throw unprocessable(neverOverridableMessage(plan, never));
      const state: OverrideRequestState = input.decision === 'approve' ? 'approved' : 'refused';
      await m.update(OverrideRequestEntity, { id }, { state, decidedById: actor.id, decidedAt: this.now(), note: input.note || null });
      await this.audit.record(
        {
          actor,
          action: input.decision === 'approve' ? 'override.approve' : 'override.refuse',
          entity: 'plan',
          entityId: plan.id,
          reason: input.note || null,
          details: {
            requestId: r.id,
            planName: plan.name,
            planVersion: plan.version,
            requestedById: r.requestedById,
            findings: r.findings,
          },
        },
        m,
      );
    });
    return this.get(id);
  }

  /**
   * Inside a booking's transaction: the approved, unused request for this plan version that covers
   * every blocking finding; marks it used by the sample. Throws a plain error otherwise.
   */
  async useForBooking(m: EntityManager, plan: StressPlanEntity, requestId: string | undefined, blocks: BlockingFinding[]) {
    const never = blocks.filter((f) => f.neverOverride);
    if (never.length) throw unprocessable(neverOverridableMessage(plan, never), { blockingFindings: blocks });
    const ask =
      `The plan check blocks "${plan.name}" (version ${plan.version}): ${blocks.map((f) => f.title).join('; ')}. ` +
      'It can be booked only with an approved override: an engineer asks for one with a reason, and a second person holding the safety approval approves it.';
    if (!requestId) throw unprocessable(ask, { blockingFindings: blocks });
    const r = await m.findOne(OverrideRequestEntity, { where: { id: requestId }, lock: { mode: 'pessimistic_write' } });
    if (!r || r.planId !== plan.id)
      throw unprocessable(`That override request is not for "${plan.name}" (version ${plan.version}). ${ask}`);
    if (r.state !== 'approved') {
      throw unprocessable(
        r.state === 'pending'
          ? 'The override request is still waiting for a second person’s approval.'
          : `The override request was ${r.state === 'used' ? 'already used by another booking' : 'refused'}; ask for a new one.`,
      );
    }
    const covered = new Set(r.findings.map((f) => f.code));
    const uncovered = blocks.filter((f) => !covered.has(f.code));
    if (uncovered.length) {
      throw unprocessable(`The approved override does not cover ${uncovered.map((f) => f.title).join('; ')}; ask for a new one.`);
    }
    return r;
  }

  async markUsed(m: EntityManager, requestId: string, sampleId: string): Promise<void> {
    await m.update(OverrideRequestEntity, { id: requestId }, { state: 'used', usedBySampleId: sampleId });
  }

  private async views(rows: OverrideRequestEntity[]): Promise<OverrideRequest[]> {
    if (!rows.length) return [];
    const m = this.ds.manager;
    const plans = await m.findBy(StressPlanEntity, { id: In([...new Set(rows.map((r) => r.planId))]) });
    const types = await m.findBy(DeviceTypeEntity, { id: In([...new Set(plans.map((p) => p.deviceTypeId))]) });
    const userIds = [...new Set(rows.flatMap((r) => [r.requestedById, r.decidedById]).filter((x): x is string => !!x))];
    const users = new Map((await m.findBy(UserEntity, { id: In(userIds) })).map((u) => [u.id, u]));
    const planById = new Map(plans.map((p) => [p.id, p]));
    const typeById = new Map(types.map((t) => [t.id, t]));
    const who = (id: string) => ({ id, name: users.get(id)?.name ?? 'unknown' });
    return rows.map((r) => {
      const p = planById.get(r.planId)!;
      return {
        id: r.id,
        state: r.state,
        plan: { id: p.id, name: p.name, version: p.version, partNumber: typeById.get(p.deviceTypeId)?.partNumber ?? '' },
        findings: r.findings,
        reason: r.reason,
        requestedBy: who(r.requestedById),
        requestedAt: r.requestedAt.toISOString(),
        decidedBy: r.decidedById ? who(r.decidedById) : null,
        decidedAt: r.decidedAt ? r.decidedAt.toISOString() : null,
        note: r.note,
        usedBySampleId: r.usedBySampleId,
      };
    });
  }
}
