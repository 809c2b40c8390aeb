/**
 * The one path every rig command takes (scheduler, protection trips, trip resets, chamber set
 * points): stored in `rig_commands` before it is published (commands.data.ts), keyed by its stable
 * cmdId. What this buys across a hand-over of the MQTT link (server/cluster/leadership.ts):
 *
 *  - a command the rig already answered is never published again: a new leader that wants the same
 *    cmdId gets the stored answer (`DurableRigLink.send`);
 *  - a command sent but not answered when its leader died is published again with the SAME cmdId
 *    (the rig applies a cmdId once and answers a repeat from memory); an answer the broker held for
 *    the dead leader's session is stored by whoever receives it (`onAck`);
 *  - a process without the link (a standby serving HTTP) queues its command; the leader publishes
 *    it and the standby waits for the stored answer (`QueuedRigLink`).
 *
 * If the database cannot be reached a command still goes out (a trip must never wait on storage):
 * cmdIds are stable, so the rig still applies it once.
 */
import { randomBytes } from 'node:crypto';
import type { Pool } from 'pg';
import { commandSchema, describeIssues, type CommandAck, type StoredCommand } from '../../../shared/mqtt';
import type { RigCommandBody, RigLink } from './contracts';
import { claimForSend, expireQueued, pruneCommandLog, queueCommand, queuedCommands, readCommand, recordAnswer } from './commands.data';
import { RigCommandError, type MqttRigLink } from './rig-link';

/** How often the leader looks for commands queued by other processes, and a standby for their answers. */
export const QUEUE_POLL_MS = 200;

export interface CommandStoreStats {
  /** Commands published for the first time. */
  firstSends: number;
  /** Sends of a cmdId already stored as answered: the stored answer was returned, nothing published. */
  answeredFromStore: number;
  /** Unanswered stored commands published again (same cmdId). */
  republished: number;
  /** Answers for commands this process did not send (e.g. held by the broker for the previous leader). */
  adoptedAnswers: number;
  /** Commands published without being stored (the database was not reachable). */
  unstored: number;
}

const ackOf = (rigCode: string, cmdId: string): CommandAck => ({ v: 1, rig: rigCode, cmdId, ok: true });

function validate(rigCode: string, command: RigCommandBody, cmdId: string): string | null {
  const parsed = commandSchema.safeParse({ ...command, v: 1, cmdId, ts: new Date().toISOString() });
  return parsed.success ? null : `Invalid command for ${rigCode}: ${describeIssues(parsed.error)}`;
}

/** The leader's RigLink: the MQTT link behind the command log. */
export class DurableRigLink implements RigLink {
  readonly stats: CommandStoreStats = { firstSends: 0, answeredFromStore: 0, republished: 0, adoptedAnswers: 0, unstored: 0 };
  private readonly boot = randomBytes(3).toString('hex');
  private counter = 0;
  private queueTimer: ReturnType<typeof setInterval> | null = null;
  private pruneTimer: ReturnType<typeof setInterval> | null = null;
  private draining = false;

  constructor(
    private readonly inner: MqttRigLink,
    private readonly pool: () => Pool,
    /** Names this process in `rig_commands.sent_by`. */
    private readonly processId: string,
    private readonly log: (line: string) => void = (l) => console.log(`[commands] ${l}`),
  ) {}

  /**
   * Start the log's upkeep; with `drainQueue` (several API processes: EMBERLOT_WORKERS=elect) also
   * publish what other processes queue. A single process never queues, so it does not poll.
   */
  start(opts: { drainQueue: boolean; pollMs?: number }): void {
    if (this.queueTimer || this.pruneTimer) return;
    if (opts.drainQueue) this.queueTimer = setInterval(() => void this.drainQueue(), opts.pollMs ?? QUEUE_POLL_MS);
    this.pruneTimer = setInterval(() => void pruneCommandLog(this.pool()).catch(() => undefined), 3_600_000);
    (this.pruneTimer as unknown as { unref?: () => void }).unref?.();
  }

  async stop(): Promise<void> {
    if (this.queueTimer) clearInterval(this.queueTimer);
    if (this.pruneTimer) clearInterval(this.pruneTimer);
    this.queueTimer = this.pruneTimer = null;
  }

  async send(rigCode: string, command: RigCommandBody, opts: { cmdId?: string; timeoutMs?: number } = {}): Promise<CommandAck> {
    if (command.type === 'stored') return this.inner.send(rigCode, command, opts);
    const cmdId = opts.cmdId ?? `srv-${this.boot}-${++this.counter}`;
    const invalid = validate(rigCode, command, cmdId);
    if (invalid) throw new RigCommandError(invalid, rigCode, cmdId, 'invalid');
    let claim: Awaited<ReturnType<typeof claimForSend>> | null = null;
    try {
      claim = await claimForSend(this.pool(), { rigCode, cmdId, type: command.type, body: command, by: this.processId });
    } catch (err) {
      this.stats.unstored++;
      this.log(`could not store ${cmdId} for ${rigCode} (${(err as Error).message}); publishing it anyway`);
    }
    if (claim?.row.state === 'acked') {
      this.stats.answeredFromStore++;
      return ackOf(rigCode, cmdId);
    }
    if (claim?.row.state === 'refused' || claim?.row.state === 'expired') {
      this.stats.answeredFromStore++;
      const why = claim.row.error ?? (claim.row.state === 'expired' ? 'expired before a leader sent it' : 'no reason given');
      throw new RigCommandError(`Rig ${rigCode} refused command ${cmdId}: ${why}`, rigCode, cmdId, 'refused', why);
    }
    if (claim?.existed) this.stats.republished++;
    else if (claim) this.stats.firstSends++;
    try {
      const ack = await this.inner.send(rigCode, command, { cmdId, timeoutMs: opts.timeoutMs });
      await this.store(rigCode, cmdId, true, null);
      return ack;
    } catch (err) {
      if (err instanceof RigCommandError && err.reason === 'refused') await this.store(rigCode, cmdId, false, err.rigError);
      throw err;
    }
  }

  /** Every valid command-ack: to the waiting sender, or stored when nobody here waits for it. */
  onAck(rigCode: string, ack: CommandAck): void {
    if (this.inner.onAck(rigCode, ack)) return;
    void recordAnswer(this.pool(), rigCode, ack.cmdId, ack.ok, ack.ok ? null : (ack.error ?? 'no reason given'))
      .then((stored) => {
        if (stored) this.stats.adoptedAnswers++;
      })
      .catch(() => undefined);
  }

  publishStored(rigCode: string, cmd: StoredCommand): void {
    this.inner.publishStored(rigCode, cmd);
  }

  connected(): boolean {
    return this.inner.connected();
  }

  revoke(rigCode: string): Promise<boolean> {
    return this.inner.revoke(rigCode);
  }

  seqSeen(rigCode: string): number | null {
    return this.inner.seqSeen(rigCode);
  }

  pendingCount(): number {
    return this.inner.pendingCount();
  }

  private async store(rigCode: string, cmdId: string, ok: boolean, error: string | null): Promise<void> {
    try {
      await recordAnswer(this.pool(), rigCode, cmdId, ok, error);
    } catch (err) {
      this.log(`could not store the answer to ${cmdId} (${(err as Error).message})`);
    }
  }

  /** Publish what other processes queued (each answered through the store). */
  private async drainQueue(): Promise<void> {
    if (this.draining || !this.inner.connected()) return;
    this.draining = true;
    try {
      for (const q of await queuedCommands(this.pool())) {
        // Validated again as it comes out of the table (QueuedRigLink validated it going in).
        const parsed = commandSchema.safeParse({ ...q.body, v: 1, cmdId: q.cmdId, ts: new Date().toISOString() });
        if (!parsed.success || parsed.data.type === 'stored') {
          await recordAnswer(this.pool(), q.rigCode, q.cmdId, false, 'not a valid command');
          continue;
        }
        const { v: _v, cmdId: _c, ts: _t, ...body } = parsed.data;
        // Not awaited in turn: one slow rig must not hold the others' commands.
        void this.send(q.rigCode, body, { cmdId: q.cmdId }).catch(() => undefined);
      }
    } catch {
      /* database down: the ingest reports that */
    } finally {
      this.draining = false;
    }
  }
}

/**
 * A standby's RigLink (it serves HTTP but holds no MQTT link): the command is queued in the log,
 * the leader publishes it, and the answer is read back from the log. A command no leader took
 * before the timeout is marked expired, so it can never go out after its caller gave up.
 */
export class QueuedRigLink implements RigLink {
  private readonly boot = randomBytes(3).toString('hex');
  private counter = 0;
  private stopped = false;

  constructor(
    private readonly pool: () => Pool,
    private readonly pollMs = QUEUE_POLL_MS,
    /** How this process asks the brokers to drop a rig's clients (one-shot-revoke.ts); none: not forwarded. */
    private readonly revokeVia?: (rigCode: string) => Promise<boolean>,
  ) {}

  /** A revocation does not wait for a leader: it goes to the brokers directly (see `revokeVia`). */
  revoke(rigCode: string): Promise<boolean> {
    return this.revokeVia ? this.revokeVia(rigCode) : Promise.resolve(false);
  }

  async send(rigCode: string, command: RigCommandBody, opts: { cmdId?: string; timeoutMs?: number } = {}): Promise<CommandAck> {
    const cmdId = opts.cmdId ?? `sby-${this.boot}-${++this.counter}`;
    const invalid = validate(rigCode, command, cmdId);
    if (invalid) throw new RigCommandError(invalid, rigCode, cmdId, 'invalid');
    if (command.type === 'stored') throw new RigCommandError('Only the leader confirms stored telemetry.', rigCode, cmdId, 'invalid');
    const timeoutMs = opts.timeoutMs ?? 10_000;
    await queueCommand(this.pool(), { rigCode, cmdId, type: command.type, body: command });
    let deadline = Date.now() + timeoutMs;
    let expiredTried = false;
    for (;;) {
      if (this.stopped) throw new RigCommandError('The server is shutting down.', rigCode, cmdId, 'stopped');
      const row = await readCommand(this.pool(), rigCode, cmdId);
      if (row?.state === 'acked') return ackOf(rigCode, cmdId);
      if (row?.state === 'refused' || row?.state === 'expired') {
        const why = row.error ?? 'no reason given';
        throw new RigCommandError(`Rig ${rigCode} refused command ${cmdId}: ${why}`, rigCode, cmdId, 'refused', why);
      }
      if (Date.now() >= deadline) {
        if (!expiredTried) {
          expiredTried = true;
          const why = `no leader published it within ${timeoutMs} ms`;
          if (await expireQueued(this.pool(), rigCode, cmdId, why))
            throw new RigCommandError(`Command ${command.type} (${cmdId}) timed out: ${why}.`, rigCode, cmdId, 'timeout');
          deadline = Date.now() + timeoutMs; // a leader took it meanwhile: wait for the rig's answer once more
        } else {
          throw new RigCommandError(
            `Command ${command.type} (${cmdId}) timed out after ${timeoutMs} ms: rig ${rigCode} did not acknowledge.`,
            rigCode,
            cmdId,
            'timeout',
          );
        }
      }
      await new Promise((r) => setTimeout(r, this.pollMs));
    }
  }

  connected(): boolean {
    return false;
  }

  stop(): void {
    this.stopped = true;
  }
}
