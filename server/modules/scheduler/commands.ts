/**
 * Rig commands the scheduler needs, sent at most once per cmdId per process while they succeed.
 * The caller first compares the rig's last reported state with the wanted one and only asks for a
 * command when they differ (so a restarted server does not repeat what the rig already did); the
 * stable cmdId makes a repeat harmless anyway (the rig applies a cmdId once).
 */
import type { CommandAck } from '../../../shared/mqtt';
import type { RigCommandBody, RigLink } from '../telemetry/contracts';

interface Entry {
  status: 'inflight' | 'ok' | 'failed';
  attempts: number;
  lastAt: number;
  error?: string;
}

export interface CommandOutcome {
  cmdId: string;
  rigCode: string;
  ok: boolean;
  attempts: number;
  error?: string;
}

/** Retry after 2, 4, 8 … s, at most a minute apart. */
export const backoffMs = (attempts: number) => Math.min(60_000, 1000 * 2 ** attempts);
/** Report a failing command after this many attempts (and every 10 after). */
export const REPORT_AFTER_ATTEMPTS = 3;

export class CommandTracker {
  private readonly entries = new Map<string, Entry>();
  private readonly inflight = new Set<Promise<unknown>>();

  constructor(
    private readonly link: () => RigLink | undefined,
    private readonly now: () => number = Date.now,
    private readonly onFailure: (o: CommandOutcome, cmd: RigCommandBody) => void = () => undefined,
  ) {}

  /** True once this process got ok:true for the cmdId. */
  acked(cmdId: string): boolean {
    return this.entries.get(cmdId)?.status === 'ok';
  }

  /**
   * Send `cmd` unless it is satisfied already (the rig reports the wanted state), in flight,
   * acknowledged, or waiting for its retry. Never throws; never waits for the ack.
   */
  ensure(rigCode: string, cmdId: string, cmd: RigCommandBody, satisfied: boolean): 'satisfied' | 'sent' | 'waiting' {
    if (satisfied) return 'satisfied';
    const e = this.entries.get(cmdId);
    if (e?.status === 'inflight' || e?.status === 'ok') return 'waiting';
    if (e?.status === 'failed' && this.now() - e.lastAt < backoffMs(e.attempts)) return 'waiting';
    const attempts = (e?.attempts ?? 0) + 1;
    const entry: Entry = { status: 'inflight', attempts, lastAt: this.now() };
    this.entries.set(cmdId, entry);
    const link = this.link();
    const p: Promise<CommandAck> = link ? link.send(rigCode, cmd, { cmdId }) : Promise.reject(new Error('no rig link (MQTT not started)'));
    const done = p.then(
      (ack) => {
        if (ack && ack.ok === false) throw new Error(ack.error ?? 'the rig refused the command');
        entry.status = 'ok';
        entry.lastAt = this.now();
      },
    ).catch((err: unknown) => {
      entry.status = 'failed';
      entry.lastAt = this.now();
      entry.error = err instanceof Error ? err.message : String(err);
      if (attempts === REPORT_AFTER_ATTEMPTS || (attempts > REPORT_AFTER_ATTEMPTS && (attempts - REPORT_AFTER_ATTEMPTS) % 10 === 0)) {
        this.onFailure({ cmdId, rigCode, ok: false, attempts, error: entry.error }, cmd);
      }
    });
    this.inflight.add(done);
    void done.finally(() => this.inflight.delete(done));
    return 'sent';
  }

  /** Resolves when every command sent so far has its answer (tests, shutdown). */
  async settled(): Promise<void> {
    while (this.inflight.size) await Promise.allSettled([...this.inflight]);
  }

  /** Drop memory of commands that are no longer wanted (keeps the map small). */
  forgetExcept(keep: Set<string>): void {
    for (const k of this.entries.keys()) if (!keep.has(k)) this.entries.delete(k);
  }
}
