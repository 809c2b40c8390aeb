/**
 * Alarms: raised by protection and the run scheduler, acknowledged by people.
 *
 * Life of an alarm (one row):
 * - raise(kind, rig, socket): if a *live* alarm with the same dedupe key (kind + rig + socket; + run
 *   for run-scoped kinds such as read-point-overdue)
 *   exists, it is updated (numbers, message, last seen; re-activated if it had cleared); otherwise a
 *   new row is inserted and subscribers are told ('alarm' event, change 'raised').
 * - clear(key): the condition went away → clearedAt. The alarm stays on the open list until someone
 *   acknowledges it.
 * - acknowledge(id, note): operator, engineer or admin; audited.
 * A row is live while it is unacknowledged OR its condition still holds, so acknowledging a
 * condition that persists (a rig still offline) does not spawn a new alarm on the next sample;
 * only after it has been both acknowledged and cleared does the next occurrence open a new one.
 * Raises of one key are serialised by a transaction-scoped advisory lock (safe across processes).
 */
import { formatUtc } from '../../../shared/domain/format';
import { In, IsNull, type EntityManager } from 'typeorm';
import {
  ALARM_KINDS,
  type AcknowledgeAlarmInput,
  type Alarm,
  type AlarmCounts,
  type AlarmKindName,
  type AlarmList,
  type AlarmListQuery,
  type AlarmSeverityName,
} from '../../../shared/schemas/alarms';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { AppContext } from '../../context';
import { AlarmEntity, RigEntity, RunEntity, UserEntity } from '../../db/entities';
import { conflict, notFound } from '../../http/errors';
import { ALARM_EVENT, type AlarmChange, type AlarmEvent } from '../../events';
import { alarmPage, lockAlarmKey, openAlarmCounts } from './alarms.data';

export { ALARM_EVENT, type AlarmChange, type AlarmEvent } from '../../events';

export interface RaiseAlarmInput {
  kind: AlarmKindName;
  severity: AlarmSeverityName;
  rigId: string | null;
  runId: string | null;
  socketIndex: number | null;
  title: string;
  message: string;
  /** What to do. */
  action: string;
  /** The numbers behind it. */
  details?: Record<string, unknown>;
}

export interface RaiseResult {
  alarm: Alarm;
  created: boolean;
  /** An unacknowledged alarm whose condition had cleared came back. */
  reactivated: boolean;
}

/**
 * Kinds that belong to one run rather than to the rig's present state: two runs on one rig (a
 * finished run's final read point never measured, then the next run's) are two things to do, so
 * their alarms must not merge — the key carries the run.
 */
const RUN_SCOPED_KINDS: ReadonlySet<AlarmKindName> = new Set<AlarmKindName>(['read-point-overdue']);

export function dedupeKeyFor(kind: AlarmKindName, rigId: string | null, socketIndex: number | null, runId: string | null = null): string {
  const key = `${kind}:${rigId ?? '-'}:${socketIndex ?? '-'}`;
  return RUN_SCOPED_KINDS.has(kind) ? `${key}:run:${runId ?? '-'}` : key;
}

const clip = (s: string, n: number) => (s.length > n ? s.slice(0, n - 1) + '…' : s);
const iso = (d: Date | null) => (d ? d.toISOString() : null);

export class AlarmsService {
  constructor(private readonly ctx: AppContext) {}

  private liveWhere(key: string) {
    return [
      { dedupeKey: key, acknowledgedAt: IsNull() },
      { dedupeKey: key, clearedAt: IsNull() },
    ];
  }

  /** Raise or refresh the alarm for this condition. */
  async raise(input: RaiseAlarmInput): Promise<RaiseResult> {
    const key = dedupeKeyFor(input.kind, input.rigId, input.socketIndex, input.runId);
    const now = this.ctx.now();
    const { row, created, reactivated } = await this.ctx.ds.transaction(async (m) => {
      await lockAlarmKey(m, key);
      const existing = await m.findOne(AlarmEntity, { where: this.liveWhere(key), order: { raisedAt: 'DESC' } });
      const details = { ...(input.details ?? {}), action: input.action, lastSeenAt: now.toISOString() };
      if (existing) {
        const wasCleared = existing.clearedAt !== null;
        existing.severity = input.severity;
        existing.title = clip(input.title, 200);
        existing.message = input.message;
        existing.runId = input.runId ?? existing.runId;
        existing.details = { ...details, occurrences: Number(existing.details?.occurrences ?? 1) + (wasCleared ? 1 : 0) };
        existing.clearedAt = null;
        return { row: await m.save(existing), created: false, reactivated: wasCleared };
      }
      const row = m.create(AlarmEntity, {
        kind: input.kind as AlarmEntity['kind'],
        severity: input.severity,
        rigId: input.rigId,
        runId: input.runId,
        socketIndex: input.socketIndex,
        title: clip(input.title, 200),
        message: input.message,
        details: { ...details, occurrences: 1 },
        dedupeKey: key,
        raisedAt: now,
        acknowledgedAt: null,
        acknowledgedById: null,
        ackNote: null,
        clearedAt: null,
      });
      return { row: await m.save(row), created: true, reactivated: false };
    });
    const [alarm] = await this.toAlarms([row]);
    this.emit(created ? 'raised' : 'updated', alarm);
    return { alarm, created, reactivated };
  }

  /**
   * The condition behind this key went away. Returns the cleared alarm, or null if none was active.
   * `runId` picks the run for run-scoped kinds (RUN_SCOPED_KINDS); other kinds ignore it.
   */
  async clear(
    kind: AlarmKindName,
    rigId: string | null,
    socketIndex: number | null,
    details?: Record<string, unknown>,
    runId: string | null = null,
  ): Promise<Alarm | null> {
    const key = dedupeKeyFor(kind, rigId, socketIndex, runId);
    const row = await this.ctx.ds.transaction(async (m) => {
      await lockAlarmKey(m, key);
      const live = await m.findOne(AlarmEntity, { where: { dedupeKey: key, clearedAt: IsNull() }, order: { raisedAt: 'DESC' } });
      if (!live) return null;
      live.clearedAt = this.ctx.now();
      if (details) live.details = { ...live.details, cleared: details };
      return m.save(live);
    });
    if (!row) return null;
    const [alarm] = await this.toAlarms([row]);
    this.emit('cleared', alarm);
    return alarm;
  }

  /** Keys of alarms whose condition still holds (for monitors restarting). */
  async activeKeys(
    kinds: readonly AlarmKindName[],
  ): Promise<Array<{ key: string; kind: AlarmKindName; rigId: string | null; socketIndex: number | null }>> {
    const rows = await this.ctx.ds.getRepository(AlarmEntity).find({
      where: { clearedAt: IsNull(), kind: In([...kinds] as AlarmEntity['kind'][]) },
      select: { dedupeKey: true, kind: true, rigId: true, socketIndex: true },
    });
    return rows.map((r) => ({ key: r.dedupeKey, kind: r.kind, rigId: r.rigId, socketIndex: r.socketIndex }));
  }

  async list(q: AlarmListQuery): Promise<AlarmList> {
    const [rows, total] = await alarmPage(this.ctx.ds.manager, q);
    return { items: await this.toAlarms(rows), total };
  }

  async get(id: string): Promise<Alarm> {
    const row = await this.ctx.ds.getRepository(AlarmEntity).findOne({ where: { id } });
    if (!row) throw notFound('The alarm');
    const [alarm] = await this.toAlarms([row]);
    return alarm;
  }

  async acknowledge(actor: SessionUser, id: string, input: AcknowledgeAlarmInput): Promise<Alarm> {
    const row = await this.ctx.ds.transaction(async (m) => {
      const a = await m.findOne(AlarmEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!a) throw notFound('The alarm');
      if (a.acknowledgedAt) {
        const by = a.acknowledgedById ? await m.findOne(UserEntity, { where: { id: a.acknowledgedById } }) : null;
        throw conflict(`This alarm was already acknowledged${by ? ` by ${by.name}` : ''} at ${formatUtc(a.acknowledgedAt)}.`);
      }
      a.acknowledgedAt = this.ctx.now();
      a.acknowledgedById = actor.id;
      a.ackNote = input.note;
      const saved = await m.save(a);
      await this.ctx.audit.record(
        {
          actor,
          action: 'alarm.acknowledge',
          entity: 'alarm',
          entityId: a.id,
          reason: input.note,
          details: {
            kind: a.kind,
            severity: a.severity,
            rigId: a.rigId,
            runId: a.runId,
            socketIndex: a.socketIndex,
            cleared: a.clearedAt !== null,
          },
        },
        m,
      );
      return saved;
    });
    const [alarm] = await this.toAlarms([row]);
    this.emit('acknowledged', alarm);
    return alarm;
  }

  async counts(): Promise<AlarmCounts> {
    const rows = await openAlarmCounts(this.ctx.ds.manager);
    const bySeverity: Record<AlarmSeverityName, number> = { critical: 0, warning: 0, info: 0 };
    let open = 0;
    let active = 0;
    const perRig = new Map<string, { open: number; critical: number }>();
    for (const r of rows) {
      open += r.n;
      if (r.active) active += r.n;
      bySeverity[r.severity] = (bySeverity[r.severity] ?? 0) + r.n;
      if (r.rig_id) {
        const e = perRig.get(r.rig_id) ?? { open: 0, critical: 0 };
        e.open += r.n;
        if (r.severity === 'critical') e.critical += r.n;
        perRig.set(r.rig_id, e);
      }
    }
    const rigs = perRig.size
      ? await this.ctx.ds.getRepository(RigEntity).find({ where: { id: In([...perRig.keys()]) }, select: { id: true, code: true } })
      : [];
    const codeOf = new Map(rigs.map((r) => [r.id, r.code]));
    const byRig = [...perRig.entries()]
      .map(([rigId, e]) => ({ rigId, rigCode: codeOf.get(rigId) ?? '?', ...e }))
      .sort((a, b) => b.critical - a.critical || b.open - a.open || a.rigCode.localeCompare(b.rigCode));
    return { open, active, bySeverity, byRig };
  }

  /** Entities → response objects, with rig / run codes and the acknowledging person's name. */
  async toAlarms(rows: AlarmEntity[], m: EntityManager = this.ctx.ds.manager): Promise<Alarm[]> {
    const ids = <K extends keyof AlarmEntity>(k: K) =>
      [...new Set(rows.map((r) => r[k]).filter((v): v is NonNullable<AlarmEntity[K]> => !!v))] as string[];
    const rigIds = ids('rigId');
    const runIds = ids('runId');
    const userIds = ids('acknowledgedById');
    const [rigs, runs, users] = await Promise.all([
      rigIds.length ? m.find(RigEntity, { where: { id: In(rigIds) }, select: { id: true, code: true } }) : [],
      runIds.length ? m.find(RunEntity, { where: { id: In(runIds) }, select: { id: true, code: true } }) : [],
      userIds.length ? m.find(UserEntity, { where: { id: In(userIds) }, select: { id: true, name: true } }) : [],
    ]);
    const rig = new Map(rigs.map((r) => [r.id, r.code]));
    const run = new Map(runs.map((r) => [r.id, r.code]));
    const user = new Map(users.map((u) => [u.id, u.name]));
    return rows.map((r) => {
      const { action, lastSeenAt, occurrences, ...details } = r.details ?? {};
      return {
        id: r.id,
        kind: (ALARM_KINDS as readonly string[]).includes(r.kind) ? r.kind : 'ingest-dropped',
        severity: r.severity,
        rigId: r.rigId,
        rigCode: r.rigId ? (rig.get(r.rigId) ?? null) : null,
        runId: r.runId,
        runCode: r.runId ? (run.get(r.runId) ?? null) : null,
        socketIndex: r.socketIndex,
        title: r.title,
        message: r.message,
        action: typeof action === 'string' ? action : '',
        details,
        raisedAt: r.raisedAt.toISOString(),
        lastSeenAt: typeof lastSeenAt === 'string' ? lastSeenAt : r.raisedAt.toISOString(),
        occurrences: Number(occurrences ?? 1),
        acknowledgedAt: iso(r.acknowledgedAt),
        acknowledgedBy: r.acknowledgedById ? { id: r.acknowledgedById, name: user.get(r.acknowledgedById) ?? 'Unknown user' } : null,
        ackNote: r.ackNote,
        clearedAt: iso(r.clearedAt),
        open: r.acknowledgedAt === null,
        active: r.clearedAt === null,
      };
    });
  }

  private emit(change: AlarmChange, alarm: Alarm): void {
    try {
      this.ctx.events.emit(ALARM_EVENT, { change, alarm } satisfies AlarmEvent);
    } catch (err) {
      console.error('[alarms] an alarm listener failed:', err instanceof Error ? err.message : err);
    }
  }
}
