import { ILike, type DataSource, type EntityManager } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import {
  deviceTypeRuleIssues,
  type DeviceType,
  type DeviceTypeInput,
  type DeviceTypePatch,
  type DeviceTypeSummary,
} from '../../../shared/schemas/devices';
import { DeviceTypeEntity } from '../../db/entities';
import { badRequest, conflict, notFound } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { deviceTypeUsage } from './device-types.data';

/** Every rating field, in the order the schema lists them (used to map and to diff). */
export const DEVICE_TYPE_FIELDS = [
  'partNumber',
  'description',
  'kind',
  'polarity',
  'bvcboV',
  'bvceoV',
  'bveboV',
  'icMaxA',
  'pMaxW',
  'pRatedAtC',
  'tjMaxC',
  'tstgMinC',
  'tstgMaxC',
  'thetaJcCPerW',
  'thetaJaCPerW',
  'betaRef',
  'betaRefIcA',
  'betaRefTC',
  'xtb',
  'icboRefA',
  'icboHotA',
  'icboHotC',
  'icboHotVcbV',
  'sbKneeV',
  'sbSlopeN',
  'breakdownN',
] as const satisfies ReadonlyArray<keyof DeviceTypeInput>;

/** The ratings of an entity as the plan check takes them. */
export function toDeviceTypeInput(e: DeviceTypeEntity): DeviceTypeInput {
  return {
    partNumber: e.partNumber,
    description: e.description,
    kind: e.kind,
    polarity: e.polarity,
    bvcboV: e.bvcboV,
    bvceoV: e.bvceoV,
    bveboV: e.bveboV,
    icMaxA: e.icMaxA,
    pMaxW: e.pMaxW,
    pRatedAtC: e.pRatedAtC,
    tjMaxC: e.tjMaxC,
    tstgMinC: e.tstgMinC,
    tstgMaxC: e.tstgMaxC,
    thetaJcCPerW: e.thetaJcCPerW,
    thetaJaCPerW: e.thetaJaCPerW,
    betaRef: e.betaRef,
    betaRefIcA: e.betaRefIcA,
    betaRefTC: e.betaRefTC,
    xtb: e.xtb,
    icboRefA: e.icboRefA,
    icboHotA: e.icboHotA,
    icboHotC: e.icboHotC,
    icboHotVcbV: e.icboHotVcbV,
    sbKneeV: e.sbKneeV,
    sbSlopeN: e.sbSlopeN,
    breakdownN: e.breakdownN,
  };
}

export function toDeviceType(e: DeviceTypeEntity): DeviceType {
  return { id: e.id, ...toDeviceTypeInput(e), createdAt: e.createdAt.toISOString(), updatedAt: e.updatedAt.toISOString() };
}

const duplicatePart = (partNumber: string) => conflict(`A device type with the part number ${partNumber} already exists.`);
/** Two people saving the same part number at once: the unique index decides, and the loser gets the same 409. */
const uniqueToConflict =
  (partNumber: string) =>
  (e: unknown): never => {
    if ((e as { code?: string }).code === '23505') throw duplicatePart(partNumber);
    throw e;
  };

export class DeviceTypesService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
  ) {}

  async list(q?: string): Promise<DeviceTypeSummary[]> {
    const like = q ? ILike(`%${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`) : undefined;
    const rows = await this.ds.getRepository(DeviceTypeEntity).find({
      where: like ? [{ partNumber: like }, { description: like }] : {},
      order: { partNumber: 'ASC' },
    });
    if (rows.length === 0) return [];
    const counts = await deviceTypeUsage(
      this.ds.manager,
      rows.map((r) => r.id),
    );
    const byId = new Map(counts.map((c) => [c.id, c]));
    return rows.map((r) => {
      const c = byId.get(r.id);
      return { ...toDeviceType(r), lotCount: c?.lots ?? 0, deviceCount: c?.devices ?? 0, planCount: c?.plans ?? 0 };
    });
  }

  async get(id: string): Promise<DeviceType> {
    const e = await this.ds.getRepository(DeviceTypeEntity).findOneBy({ id });
    if (!e) throw notFound('The device type');
    return toDeviceType(e);
  }

  /** The entity, for other modules (lots, plans) that need the ratings. */
  async entity(id: string, m: EntityManager = this.ds.manager): Promise<DeviceTypeEntity> {
    const e = await m.findOneBy(DeviceTypeEntity, { id });
    if (!e) throw notFound('The device type');
    return e;
  }

  async create(actor: SessionUser, input: DeviceTypeInput): Promise<DeviceType> {
    return this.ds.transaction(async (m) => {
      if (await m.exists(DeviceTypeEntity, { where: { partNumber: input.partNumber } })) throw duplicatePart(input.partNumber);
      const e = await m.save(m.create(DeviceTypeEntity, { ...input })).catch(uniqueToConflict(input.partNumber));
      await this.audit.record(
        { actor, action: 'device-type.create', entity: 'device-type', entityId: e.id, details: { partNumber: e.partNumber } },
        m,
      );
      return toDeviceType(e);
    });
  }

  /** PUT (whole, `input` already has every field) or PATCH (some fields); the merged result must obey the cross-field rules. */
  async update(actor: SessionUser, id: string, input: DeviceTypePatch, mode: 'replace' | 'patch'): Promise<DeviceType> {
    return this.ds.transaction(async (m) => {
      const e = await m.findOne(DeviceTypeEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!e) throw notFound('The device type');
      const before = toDeviceTypeInput(e);
      const merged: DeviceTypeInput = { ...before, ...input };
      const issues = deviceTypeRuleIssues(merged);
      if (issues.length) {
        const fields: Record<string, string[]> = {};
        for (const i of issues) (fields[i.path] ??= []).push(i.message);
        throw badRequest(`The request body is not valid (${issues[0].path}: ${issues[0].message}).`, fields);
      }
      if (merged.partNumber !== before.partNumber) {
        const clash = await m.exists(DeviceTypeEntity, { where: { partNumber: merged.partNumber } });
        if (clash) throw duplicatePart(merged.partNumber);
      }
      const changes: Record<string, { from: unknown; to: unknown }> = {};
      for (const k of DEVICE_TYPE_FIELDS) {
        if (merged[k] !== before[k]) changes[k] = { from: before[k], to: merged[k] };
      }
      if (Object.keys(changes).length === 0) return toDeviceType(e);
      Object.assign(e, merged);
      const saved = await m.save(e).catch(uniqueToConflict(merged.partNumber));
      await this.audit.record(
        {
          actor,
          action: 'device-type.update',
          entity: 'device-type',
          entityId: e.id,
          details: { mode, partNumber: e.partNumber, changes },
        },
        m,
      );
      return toDeviceType(saved);
    });
  }
}
