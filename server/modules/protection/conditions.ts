/**
 * Protection's view of its own alarms: which conditions it believes active (by dedupe key), with
 * a throttled refresh of an ongoing alarm's numbers and a clear only of what is active. The
 * alarms themselves live in the alarms service (one live alarm per dedupe key).
 */
import { isAlarmKind, type AlarmKindName } from '../../../shared/schemas/alarms';
import { dedupeKeyFor, type AlarmsService, type RaiseAlarmInput } from '../alarms/alarms.service';

/** The kinds protection raises; active ones are read back at start so they can clear after a restart. */
export const PROTECTION_ALARM_KINDS: readonly AlarmKindName[] = [
  'runaway-warning',
  'runaway-trip',
  'rig-offline',
  'ambient-out-of-band',
  'bias-out-of-tolerance',
  'leakage-jump',
];

/** Active condition keys (`kind:rig:socket`) → last refresh, with a count per rig for a cheap "none here". */
export class ActiveConditions {
  private readonly byKey = new Map<string, number>();
  private readonly perRig = new Map<string, number>();

  private static rigOf(key: string): string {
    return key.split(':')[1] ?? '';
  }

  get(key: string): number | undefined {
    return this.byKey.get(key);
  }

  has(key: string): boolean {
    return this.byKey.has(key);
  }

  set(key: string, at: number): void {
    if (!this.byKey.has(key)) {
      const rig = ActiveConditions.rigOf(key);
      this.perRig.set(rig, (this.perRig.get(rig) ?? 0) + 1);
    }
    this.byKey.set(key, at);
  }

  delete(key: string): void {
    if (!this.byKey.delete(key)) return;
    const rig = ActiveConditions.rigOf(key);
    const n = (this.perRig.get(rig) ?? 1) - 1;
    if (n > 0) this.perRig.set(rig, n);
    else this.perRig.delete(rig);
  }

  keys(): IterableIterator<string> {
    return this.byKey.keys();
  }

  anyFor(rigId: string): boolean {
    return this.perRig.has(rigId);
  }
}

export class ConditionAlarms {
  readonly active = new ActiveConditions();

  constructor(
    private readonly alarms: () => AlarmsService,
    /** An ongoing alarm's numbers are refreshed at most this often (ms of wall time). */
    private readonly refreshMs: number,
  ) {}

  /** Conditions still active from before a restart. */
  async load(): Promise<void> {
    for (const a of await this.alarms().activeKeys(PROTECTION_ALARM_KINDS)) this.active.set(a.key, 0);
  }

  /** Raise, or refresh an ongoing one at most every refreshMs (`force`: always). */
  async raise(input: RaiseAlarmInput, force = false): Promise<void> {
    const key = dedupeKeyFor(input.kind, input.rigId, input.socketIndex);
    const last = this.active.get(key);
    const now = Date.now();
    if (!force && last !== undefined && last > 0 && now - last < this.refreshMs) return;
    this.active.set(key, now);
    await this.alarms().raise(input);
  }

  /** Clear, when this monitor believes it active. */
  async clear(kind: AlarmKindName, rigId: string, socket: number | null, details?: Record<string, unknown>): Promise<void> {
    const key = dedupeKeyFor(kind, rigId, socket);
    if (!this.active.has(key)) return;
    this.active.delete(key);
    await this.alarms().clear(kind, rigId, socket, details);
  }

  isActive(kind: AlarmKindName, rigId: string, socket: number | null): boolean {
    // Asked for every socket of every message: most rigs have no active condition at all.
    return this.active.anyFor(rigId) && this.active.has(dedupeKeyFor(kind, rigId, socket));
  }

  /** Mark an alarm raised elsewhere (a resent trip's update) as refreshed now. */
  touch(kind: AlarmKindName, rigId: string, socket: number | null): void {
    this.active.set(dedupeKeyFor(kind, rigId, socket), Date.now());
  }

  /** Clear this rig's active conditions of the given kinds. */
  async clearRig(rigId: string, kinds: readonly AlarmKindName[], details: Record<string, unknown>): Promise<void> {
    for (const key of [...this.active.keys()]) {
      const [kind, keyRig, socket] = key.split(':');
      if (keyRig !== rigId || !isAlarmKind(kind) || !kinds.includes(kind)) continue;
      await this.clear(kind, rigId, socket === '-' ? null : Number(socket), details);
    }
  }
}
