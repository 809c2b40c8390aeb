import { randomBytes } from 'node:crypto';
import bcrypt from 'bcryptjs';
import type { EntityManager } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import { interlockDueAt } from '../../../shared/domain/standards';
import { formatUtc } from '../../../shared/domain/format';
import { describeErrorForLog } from '../../db/safe-logger';
import {
  rigMqttUsernameFor,
  RIG_SERVICE_KINDS,
  type RigServiceRecord,
  type ServiceRecordInput,
  type CreateRigInput,
  type MaintenanceInput,
  type MaintenanceWindow,
  type Rig,
  type RigWithCredentials,
  type UpdateRigInput,
} from '../../../shared/schemas/rigs';
import type { AppContext } from '../../context';
import { RigEntity, RigMaintenanceEntity, RigServiceRecordEntity, UserEntity } from '../../db/entities';
import { badRequest, conflict, notFound, unprocessable } from '../../http/errors';
import { BCRYPT_ROUNDS } from '../users/users.service';
import { overlappingMaintenance } from './rigs.data';

export function toRig(r: RigEntity): Rig {
  return {
    id: r.id,
    code: r.code,
    name: r.name,
    location: r.location,
    kind: r.kind,
    socketCount: r.socketCount,
    maxTempC: r.maxTempC,
    minTempC: r.minTempC,
    maxPressureKPa: r.maxPressureKPa,
    maxVoltageV: r.maxVoltageV,
    humidityCapable: r.humidityCapable,
    maxHumidityPct: r.maxHumidityPct,
    active: r.active,
    mqttUsername: r.mqttUsername,
    credentialsIssuedAt: r.credentialsIssuedAt.toISOString(),
    credentialsRevokedAt: r.credentialsRevokedAt ? r.credentialsRevokedAt.toISOString() : null,
    online: r.online,
    lastSeenAt: r.lastSeenAt ? r.lastSeenAt.toISOString() : null,
    lastSeq: r.lastSeq,
    chamberC: r.chamberC,
    setpointC: r.setpointC,
    humidityPct: r.humidityPct,
    calibrationDueAt: r.calibrationDueAt?.toISOString() ?? null,
    interlockTestedAt: r.interlockTestedAt?.toISOString() ?? null,
    interlockDueAt: r.interlockTestedAt ? interlockDueAt(r.interlockTestedAt).toISOString() : null,
    createdAt: r.createdAt.toISOString(),
  };
}

function toWindow(m: RigMaintenanceEntity, rigCode: string): MaintenanceWindow {
  return {
    id: m.id,
    rigId: m.rigId,
    rigCode,
    startsAt: m.startsAt.toISOString(),
    endsAt: m.endsAt.toISOString(),
    reason: m.reason,
    createdAt: m.createdAt.toISOString(),
  };
}

/** A fresh MQTT secret: 24 random bytes, base64url (32 characters). Shown once, stored hashed. */
export function newRigSecret(): string {
  return randomBytes(24).toString('base64url');
}

export class RigsService {
  constructor(private readonly ctx: AppContext) {}

  /** The broker address a rig connects to, from the server's configuration. */
  private broker(): { host: string; port: number } {
    return { host: this.ctx.config.mqtt.rigHost, port: this.ctx.config.mqtt.rigPort };
  }

  private get ds() {
    return this.ctx.ds;
  }

  /** Disconnect a rig's open MQTT session (revocation or a new secret). Best effort: the database
   * check at the next CONNECT refuses the old credentials either way. */
  private async kick(rigCode: string): Promise<boolean> {
    const link = this.ctx.services.rigLink;
    if (!link?.revoke) return false;
    try {
      return await link.revoke(rigCode);
    } catch {
      return false;
    }
  }

  private async findByCode(code: string, m: EntityManager = this.ds.manager, lock = false): Promise<RigEntity> {
    const rig = await m.findOne(RigEntity, { where: { code }, ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}) });
    if (!rig) throw notFound(`Rig ${code}`);
    return rig;
  }

  async list(): Promise<Rig[]> {
    const rows = await this.ds.getRepository(RigEntity).find({ order: { active: 'DESC', code: 'ASC' } });
    return rows.map(toRig);
  }

  async get(code: string): Promise<Rig> {
    return toRig(await this.findByCode(code));
  }

  async create(actor: SessionUser, input: CreateRigInput): Promise<RigWithCredentials> {
    const secret = newRigSecret();
    const hash = await bcrypt.hash(secret, BCRYPT_ROUNDS);
    const username = rigMqttUsernameFor(input.code);
    return this.ds.transaction(async (m) => {
      const clash = await m.findOne(RigEntity, { where: [{ code: input.code }, { mqttUsername: username }] });
      if (clash) throw conflict(`A rig with the code ${input.code} is already registered.`);
      const issuedAt = this.ctx.now();
      const rig = await m.save(
        m.create(RigEntity, {
          code: input.code,
          name: input.name,
          location: input.location,
          kind: input.kind,
          socketCount: input.socketCount,
          maxTempC: input.maxTempC,
          minTempC: input.minTempC,
          maxPressureKPa: input.maxPressureKPa,
          maxVoltageV: input.maxVoltageV,
          humidityCapable: input.humidityCapable,
          maxHumidityPct: input.maxHumidityPct,
          mqttUsername: username,
          mqttSecretHash: hash,
          credentialsIssuedAt: issuedAt,
          credentialsRevokedAt: null,
        }),
      );
      await this.ctx.audit.record(
        {
          actor,
          action: 'rig.create',
          entity: 'rig',
          entityId: rig.id,
          details: { code: rig.code, socketCount: rig.socketCount, mqttUsername: username },
        },
        m,
      );
      return { rig: toRig(rig), credentials: { username, secret, issuedAt: issuedAt.toISOString(), broker: this.broker() } };
    });
  }

  async update(actor: SessionUser, code: string, input: UpdateRigInput): Promise<Rig> {
    const rig = await this.ds.transaction(async (m) => {
      const rig = await this.findByCode(code, m, true);
      const changes: Record<string, unknown> = {};
      if (input.maxHumidityPct !== undefined && input.maxHumidityPct !== null && !rig.humidityCapable) {
        throw unprocessable(`Rig ${code} has no humidity control, so it has no humidity limit.`);
      }
      for (const k of ['name', 'location', 'maxTempC', 'maxVoltageV', 'maxHumidityPct', 'active'] as const) {
        if (input[k] !== undefined) {
          (rig as unknown as Record<string, unknown>)[k] = input[k];
          changes[k] = input[k];
        }
      }
      await m.save(rig);
      await this.ctx.audit.record({ actor, action: 'rig.update', entity: 'rig', entityId: rig.id, details: changes }, m);
      return toRig(rig);
    });
    // A deactivated rig is cut off like a revoked one: after COMMIT, so the broker's database
    // check refuses its reconnect, and the ingest refuses whatever it still had in flight.
    if (input.active === false) await this.kick(code);
    return rig;
  }

  /** New secret (the old one stops working at once), revocation lifted, open session kicked. */
  async rotateCredentials(actor: SessionUser, code: string): Promise<RigWithCredentials> {
    await this.findByCode(code); // 404 before spending a bcrypt hash
    const secret = newRigSecret();
    const hash = await bcrypt.hash(secret, BCRYPT_ROUNDS);
    const out = await this.ds.transaction(async (m) => {
      const rig = await this.findByCode(code, m, true);
      const wasRevoked = rig.credentialsRevokedAt !== null;
      rig.mqttSecretHash = hash;
      rig.credentialsIssuedAt = this.ctx.now();
      rig.credentialsRevokedAt = null;
      await m.save(rig);
      await this.ctx.audit.record(
        { actor, action: 'rig.credentials.rotate', entity: 'rig', entityId: rig.id, details: { code: rig.code, wasRevoked } },
        m,
      );
      return {
        rig: toRig(rig),
        credentials: {
          username: rig.mqttUsername,
          secret,
          issuedAt: rig.credentialsIssuedAt.toISOString(),
          broker: this.broker(),
        },
      };
    });
    await this.kick(code); // the rig reconnects with the new secret (after it is installed)
    return out;
  }

  async revoke(actor: SessionUser, code: string, reason: string): Promise<Rig & { disconnectRequested: boolean }> {
    const rig = await this.ds.transaction(async (m) => {
      const r = await this.findByCode(code, m, true);
      if (r.credentialsRevokedAt)
        throw conflict(`The credentials of rig ${code} were already revoked on ${r.credentialsRevokedAt.toISOString()}.`);
      r.credentialsRevokedAt = this.ctx.now();
      await m.save(r);
      await this.ctx.audit.record(
        { actor, action: 'rig.credentials.revoke', entity: 'rig', entityId: r.id, reason, details: { code: r.code } },
        m,
      );
      return r;
    });
    // After COMMIT, so a rig reconnecting at once is refused by the broker's database check.
    const disconnectRequested = await this.kick(code);
    return { ...toRig(rig), disconnectRequested };
  }

  async listServiceRecords(code: string): Promise<RigServiceRecord[]> {
    const rig = await this.findByCode(code);
    const rows = await this.ds
      .getRepository(RigServiceRecordEntity)
      .find({ where: { rigId: rig.id }, order: { doneAt: 'DESC', createdAt: 'DESC' } });
    const ids = [...new Set(rows.map((r) => r.createdById).filter((x): x is string => !!x))];
    const users = ids.length ? await this.ds.getRepository(UserEntity).findBy(ids.map((id) => ({ id }))) : [];
    const names = new Map(users.map((u) => [u.id, u.name]));
    return rows.map((r) => ({
      id: r.id,
      rigCode: rig.code,
      kind: RIG_SERVICE_KINDS.find((k) => k === r.kind) ?? 'calibration',
      doneAt: r.doneAt.toISOString(),
      dueAt: r.dueAt?.toISOString() ?? null,
      note: r.note,
      byName: r.createdById ? (names.get(r.createdById) ?? null) : null,
      createdAt: r.createdAt.toISOString(),
    }));
  }

  /**
   * A calibration or interlock test entered by an admin: kept as a record, and the rig's date moves
   * to it (the start permit reads the rig's dates). Work done in the future is refused.
   */
  async addServiceRecord(actor: SessionUser, code: string, input: ServiceRecordInput): Promise<Rig> {
    const doneAt = new Date(`${input.doneOn}T00:00:00Z`);
    const now = this.ctx.now();
    if (doneAt.getTime() > now.getTime()) {
      const what = input.kind === 'calibration' ? 'calibration' : 'interlock test';
      throw badRequest(`The ${what} date ${input.doneOn} lies in the future; enter work that was done.`, { doneOn: ['Not in the future'] });
    }
    const dueAt = input.kind === 'calibration' ? new Date(`${input.dueOn}T00:00:00Z`) : null;
    return this.ds.transaction(async (m) => {
      const rig = await this.findByCode(code, m, true);
      const rec = await m.save(
        m.create(RigServiceRecordEntity, { rigId: rig.id, kind: input.kind, doneAt, dueAt, note: input.note, createdById: actor.id }),
      );
      const before = {
        calibrationDueAt: rig.calibrationDueAt?.toISOString() ?? null,
        interlockTestedAt: rig.interlockTestedAt?.toISOString() ?? null,
      };
      if (input.kind === 'calibration') rig.calibrationDueAt = dueAt;
      else if (!rig.interlockTestedAt || doneAt.getTime() >= rig.interlockTestedAt.getTime()) rig.interlockTestedAt = doneAt;
      await m.update(RigEntity, { id: rig.id }, { calibrationDueAt: rig.calibrationDueAt, interlockTestedAt: rig.interlockTestedAt });
      await this.ctx.audit.record(
        {
          actor,
          action: input.kind === 'calibration' ? 'rig.calibration' : 'rig.interlock-test',
          entity: 'rig',
          entityId: rig.id,
          reason: input.note || null,
          details: { recordId: rec.id, doneOn: input.doneOn, ...(input.kind === 'calibration' ? { dueOn: input.dueOn } : {}), before },
        },
        m,
      );
      return toRig(rig);
    });
  }

  async listMaintenance(code: string): Promise<MaintenanceWindow[]> {
    const rig = await this.findByCode(code);
    const rows = await this.ds.getRepository(RigMaintenanceEntity).find({ where: { rigId: rig.id }, order: { startsAt: 'ASC' } });
    return rows.map((w) => toWindow(w, rig.code));
  }

  async addMaintenance(actor: SessionUser, code: string, input: MaintenanceInput): Promise<MaintenanceWindow> {
    const startsAt = new Date(input.startsAt);
    const endsAt = new Date(input.endsAt);
    if (endsAt.getTime() <= this.ctx.now().getTime())
      throw unprocessable('The window has already ended; book maintenance that is still to come.');
    const out = await this.ds.transaction(async (m) => {
      const rig = await this.findByCode(code, m, true);
      const overlap = await overlappingMaintenance(m, rig.id, startsAt, endsAt);
      if (overlap) {
        throw conflict(
          `Rig ${code} already has maintenance from ${overlap.startsAt.toISOString()} to ${overlap.endsAt.toISOString()} (${overlap.reason}); windows may not overlap.`,
        );
      }
      const w = await m.save(
        m.create(RigMaintenanceEntity, { rigId: rig.id, startsAt, endsAt, reason: input.reason, createdById: actor.id }),
      );
      await this.ctx.audit.record(
        {
          actor,
          action: 'rig.maintenance.create',
          entity: 'rig',
          entityId: rig.id,
          reason: input.reason,
          details: { windowId: w.id, startsAt: input.startsAt, endsAt: input.endsAt },
        },
        m,
      );
      return { window: toWindow(w, rig.code), rigId: rig.id };
    });
    // The booked runs this window meets get re-plan proposals (in place after it, or on another rig).
    // The window stands even if that fails: the proposals are advice, the log says why they are missing.
    await this.ctx.services.replan
      .enqueue(out.rigId, {
        kind: 'maintenance',
        why: `Oven ${out.window.rigCode} is in maintenance from ${formatUtc(startsAt)} to ${formatUtc(endsAt)} (${input.reason})`,
      })
      .catch((e: unknown) => console.log(`[replan] proposals for ${out.window.rigCode} failed: ${describeErrorForLog(e)}`));
    return out.window;
  }

  async deleteMaintenance(actor: SessionUser, code: string, id: string): Promise<void> {
    await this.ds.transaction(async (m) => {
      const rig = await this.findByCode(code, m);
      const w = await m.findOne(RigMaintenanceEntity, { where: { id, rigId: rig.id } });
      if (!w) throw notFound('The maintenance window');
      await m.delete(RigMaintenanceEntity, { id });
      await this.ctx.audit.record(
        {
          actor,
          action: 'rig.maintenance.delete',
          entity: 'rig',
          entityId: rig.id,
          details: { windowId: id, startsAt: w.startsAt.toISOString(), endsAt: w.endsAt.toISOString() },
        },
        m,
      );
    });
  }
}
