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
  /** The rig answered ok:false (it will refuse again); false = no answer in time or no link. */
  refused: boolean;
}

/** The rig's ok:false answer: reported at once (a resend gets the same answer), unlike a missing ack. */
class RefusedByRig extends Error {}

/**
 * The rig's own words when it refused: an ok:false ack, or the MQTT link's RigCommandError with
 * reason 'refused' (it rejects instead of resolving); null for a missing answer.
 */
function refusal(err: unknown): string | null {
  if (err instanceof RefusedByRig) return err.message;
  const e = err as { reason?: unknown; rigError?: unknown; message?: unknown } | null;
  if (e && e.reason === 'refused') return typeof e.rigError === 'string' ? e.rigError : String(e.message ?? 'the rig refused the command');
  return null;
}

/** Retry after 2, 4, 8 … s, at most a minute apart. */
export const backoffMs = (attempts: number) => Math.min(60_000, 1000 * 2 ** attempts);
/** Report a command the rig did not answer after this many attempts (and every 10 after); a refusal at once. */
export const REPORT_AFTER_ATTEMPTS = 3;

/** The newest command of one type sent to one rig, kept after the command stops being wanted. */
interface Newest {
  cmdId: string;
  status: Entry['status'];
  /** RigLink.seqSeen when the ack arrived (null: the link cannot tell). */
  seqAtAck: number | null;
}

export class CommandTracker {
  private readonly entries = new Map<string, Entry>();
  /** `${rigCode}|${type}` → the newest command of that type (see reportReflects). */
  private readonly newest = new Map<string, Newest>();
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
    const newestKey = `${rigCode}|${cmd.type}`;
    const newest: Newest = { cmdId, status: 'inflight', seqAtAck: null };
    this.newest.set(newestKey, newest);
    const link = this.link();
    const p: Promise<CommandAck> = link ? link.send(rigCode, cmd, { cmdId }) : Promise.reject(new Error('no rig link (MQTT not started)'));
    const done = p
      .then((ack) => {
        if (ack && ack.ok === false) throw new RefusedByRig(ack.error ?? 'the rig refused the command');
        entry.status = 'ok';
        entry.lastAt = this.now();
        // Read in the ack's own turn of the event loop: no telemetry can have arrived since it.
        newest.seqAtAck = link?.seqSeen?.(rigCode) ?? null;
        newest.status = 'ok';
      })
      .catch((err: unknown) => {
        newest.status = 'failed';
        entry.status = 'failed';
        entry.lastAt = this.now();
        const refusedWith = refusal(err);
        entry.error = refusedWith ?? (err instanceof Error ? err.message : String(err));
        const refused = refusedWith !== null;
        const first = refused ? 1 : REPORT_AFTER_ATTEMPTS;
        if (attempts === first || (attempts > first && (attempts - first) % 10 === 0)) {
          this.onFailure({ cmdId, rigCode, ok: false, attempts, error: entry.error, refused }, cmd);
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

  /**
   * May the rig's report with this seq be taken as its state for commands of `type`? Not while
   * another command of that type (a set point for a set point, bias for bias) is in flight to the
   * rig, nor when that command's ack came after the report: the report predates it. Without this a
   * read-hold's cool-down still in flight, or applied but not yet reported, made the resumed run's
   * heat look done, and the rig got bias before its set point (tests/unit/command-tracker.test.ts).
   * After a restart nothing is known and the report is taken as it is.
   */
  reportReflects(rigCode: string, type: RigCommandBody['type'], cmdId: string, reportSeq: number | null): boolean {
    const n = this.newest.get(`${rigCode}|${type}`);
    if (!n || n.cmdId === cmdId) return true;
    if (n.status === 'inflight') return false;
    if (n.status === 'ok' && n.seqAtAck !== null) return reportSeq !== null && reportSeq > n.seqAtAck;
    return true;
  }

  /** Drop memory of commands that are no longer wanted (keeps the map small). */
  forgetExcept(keep: Set<string>): void {
    for (const k of this.entries.keys()) if (!keep.has(k)) this.entries.delete(k);
  }
}
