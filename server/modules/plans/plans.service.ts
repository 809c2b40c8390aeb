import { randomUUID } from 'node:crypto';
import { In, type DataSource, type EntityManager } from 'typeorm';
import { buildPlanTemplates } from '../../../shared/plan-templates';
import type { SessionUser } from '../../../shared/schemas/auth';
import type {
  CheckStatus,
  Plan,
  PlanCheckResult,
  PlanDetail,
  PlanInput,
  PlanKind,
  PlanSummary,
  PlanTemplate,
} from '../../../shared/schemas/plans';
import { DeviceTypeEntity, StressPlanEntity, UserEntity } from '../../db/entities';
import { conflict, notFound, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { toDeviceTypeInput } from '../device-types/device-types.service';
import { runPlanCheck } from './plan-check-result';

const deviceRef = (d: DeviceTypeEntity) => ({ id: d.id, partNumber: d.partNumber, kind: d.kind, polarity: d.polarity });

function statusOf(e: StressPlanEntity): CheckStatus {
  const c = e.checkResult;
  return c?.status ?? 'none';
}

/** The plan body of a stored version (exactly the fields a plan input has). */
export function toPlanInput(e: StressPlanEntity): PlanInput {
  return {
    name: e.name,
    kind: e.kind,
    deviceTypeId: e.deviceTypeId,
    chamberC: e.chamberC,
    chamberBand: e.chamberBand,
    humidityPct: e.humidityPct,
    bias: e.bias,
    durationH: e.durationH,
    readPointsH: e.readPointsH,
    sampleSize: e.sampleSize,
    acceptNumber: e.acceptNumber,
    criteria: e.criteria,
    eaEv: e.eaEv,
    useC: e.useC,
    cycle: e.cycle ?? null,
    thermalCycle: e.thermalCycle ?? null,
    acCondition: e.acCondition ?? null,
    breakdownDerating: e.breakdownDerating,
    notes: e.notes,
  };
}

function toPlan(e: StressPlanEntity, device: DeviceTypeEntity, createdBy: UserEntity | null): Plan {
  return {
    id: e.id,
    planKey: e.planKey,
    version: e.version,
    current: e.current,
    ...toPlanInput(e),
    device: deviceRef(device),
    checkStatus: statusOf(e),
    checkResult: e.checkResult ?? null,
    createdAt: e.createdAt.toISOString(),
    createdBy: createdBy ? { id: createdBy.id, name: createdBy.name } : null,
  };
}

function toSummary(e: StressPlanEntity, device: DeviceTypeEntity): PlanSummary {
  const findings = e.checkResult?.findings ?? [];
  return {
    id: e.id,
    planKey: e.planKey,
    version: e.version,
    name: e.name,
    kind: e.kind,
    device: deviceRef(device),
    chamberC: e.chamberC,
    humidityPct: e.humidityPct,
    bias: e.bias,
    durationH: e.durationH,
    sampleSize: e.sampleSize,
    acceptNumber: e.acceptNumber,
    checkStatus: statusOf(e),
    blockCount: findings.filter((f) => f.severity === 'block').length,
    warnCount: findings.filter((f) => f.severity === 'warn').length,
    createdAt: e.createdAt.toISOString(),
  };
}

/** JSON with object keys sorted (jsonb does not keep key order), for comparing versions. */
function stable(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(stable).join(',')}]`;
  if (v && typeof v === 'object') {
    return `{${Object.keys(v)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${stable((v as Record<string, unknown>)[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(v);
}

/** Read points in ascending order (the schema has already refused repeats and points past the end). */
const normalise = (p: PlanInput): PlanInput => ({ ...p, readPointsH: [...p.readPointsH].sort((a, b) => a - b) });

export class PlansService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
    private readonly now: () => Date,
  ) {}

  async list(filter: { kind?: PlanKind; deviceTypeId?: string }): Promise<PlanSummary[]> {
    const rows = await this.ds.getRepository(StressPlanEntity).find({
      where: {
        current: true,
        ...(filter.kind ? { kind: filter.kind } : {}),
        ...(filter.deviceTypeId ? { deviceTypeId: filter.deviceTypeId } : {}),
      },
      relations: { deviceType: true },
      order: { createdAt: 'DESC', name: 'ASC' },
    });
    return rows.map((r) => toSummary(r, r.deviceType!));
  }

  async get(id: string): Promise<PlanDetail> {
    const e = await this.ds.getRepository(StressPlanEntity).findOne({ where: { id }, relations: { deviceType: true } });
    if (!e) throw notFound('The plan');
    const versions = await this.ds.getRepository(StressPlanEntity).find({ where: { planKey: e.planKey }, order: { version: 'DESC' } });
    const userIds = [...new Set(versions.map((v) => v.createdById).filter((x): x is string => !!x))];
    const users = userIds.length ? await this.ds.getRepository(UserEntity).findBy({ id: In(userIds) }) : [];
    const byId = new Map(users.map((u) => [u.id, u]));
    return {
      ...toPlan(e, e.deviceType!, e.createdById ? (byId.get(e.createdById) ?? null) : null),
      versions: versions.map((v) => ({
        id: v.id,
        version: v.version,
        current: v.current,
        name: v.name,
        checkStatus: statusOf(v),
        createdAt: v.createdAt.toISOString(),
        createdByName: v.createdById ? (byId.get(v.createdById)?.name ?? null) : null,
      })),
    };
  }

  private async deviceFor(m: EntityManager, deviceTypeId: string): Promise<DeviceTypeEntity> {
    const d = await m.findOneBy(DeviceTypeEntity, { id: deviceTypeId });
    if (!d) throw unprocessable('The device type of this plan was not found. Choose one from the list.');
    return d;
  }

  /** The plan check of an unsaved plan body (the live form). */
  async check(input: PlanInput): Promise<PlanCheckResult> {
    const d = await this.deviceFor(this.ds.manager, input.deviceTypeId);
    return runPlanCheck({ id: d.id, ...toDeviceTypeInput(d) }, normalise(input), this.now());
  }

  async templates(deviceTypeId?: string): Promise<PlanTemplate[]> {
    if (!deviceTypeId) return buildPlanTemplates();
    const d = await this.ds.getRepository(DeviceTypeEntity).findOneBy({ id: deviceTypeId });
    if (!d) throw notFound('The device type');
    return buildPlanTemplates({ id: d.id, ...toDeviceTypeInput(d) });
  }

  async create(actor: SessionUser, input: PlanInput): Promise<PlanDetail> {
    const id = await this.ds.transaction(async (m) => {
      const saved = await this.saveVersion(m, actor, normalise(input), randomUUID(), 1);
      await this.audit.record(
        {
          actor,
          action: 'plan.create',
          entity: 'plan',
          entityId: saved.id,
          details: { planKey: saved.planKey, version: 1, name: saved.name, kind: saved.kind, checkStatus: statusOf(saved) },
        },
        m,
      );
      return saved.id;
    });
    return this.get(id);
  }

  /**
   * "Editing" a plan writes a new version: same planKey, version + 1, the previous one no longer
   * current. Versions are never changed, because runs point at the exact version they were booked
   * with. Only the current version can be edited (so two people cannot both base a v3 on v2), and a
   * version keeps the plan's device type.
   */
  async newVersion(actor: SessionUser, id: string, input: PlanInput): Promise<PlanDetail> {
    const newId = await this.ds.transaction(async (m) => {
      const base = await m.findOne(StressPlanEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!base) throw notFound('The plan');
      const latest = await m.findOne(StressPlanEntity, {
        where: { planKey: base.planKey },
        order: { version: 'DESC' },
        lock: { mode: 'pessimistic_write' },
      });
      if (!latest || latest.id !== base.id || !base.current) {
        throw conflict(
          `This is version ${base.version} of “${base.name}”; version ${latest?.version} is newer. Open the newest version and edit that.`,
        );
      }
      if (input.deviceTypeId !== base.deviceTypeId) {
        const d = await m.findOneBy(DeviceTypeEntity, { id: base.deviceTypeId });
        throw unprocessable(
          `A new version keeps the plan's device type (${d?.partNumber ?? 'unknown'}). Start a new plan for another device type.`,
        );
      }
      await m.update(StressPlanEntity, { id: base.id }, { current: false });
      const saved = await this.saveVersion(m, actor, normalise(input), base.planKey, base.version + 1);
      const before = toPlanInput(base);
      const after = toPlanInput(saved);
      const changed = (Object.keys(after) as Array<keyof PlanInput>).filter((k) => stable(before[k]) !== stable(after[k]));
      await this.audit.record(
        {
          actor,
          action: 'plan.version',
          entity: 'plan',
          entityId: saved.id,
          details: { planKey: saved.planKey, version: saved.version, previousId: base.id, changed, checkStatus: statusOf(saved) },
        },
        m,
      );
      return saved.id;
    });
    return this.get(newId);
  }

  private async saveVersion(
    m: EntityManager,
    actor: SessionUser,
    input: PlanInput,
    planKey: string,
    version: number,
  ): Promise<StressPlanEntity> {
    const d = await this.deviceFor(m, input.deviceTypeId);
    const checkResult = runPlanCheck({ id: d.id, ...toDeviceTypeInput(d) }, input, this.now());
    return m.save(
      m.create(StressPlanEntity, {
        ...input,
        cycle: input.cycle ?? null,
        thermalCycle: input.thermalCycle ?? null,
        acCondition: input.acCondition ?? null,
        planKey,
        version,
        current: true,
        checkResult: checkResult as unknown as Record<string, unknown>,
        createdById: actor.id,
      }),
    );
  }
}
