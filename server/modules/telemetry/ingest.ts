/**
 * Telemetry ingest: validates every MQTT message, gathers them for a short window, writes each
 * window in one transaction (ingest-store.ts), and only after COMMIT confirms the seqs to the rig
 * (`stored`) and emits TELEMETRY_LANDED / RIG_STATUS_CHANGED.
 *
 * Database down: messages wait in a bounded buffer and the write is retried with back-off. Rigs
 * keep re-sending what is not confirmed, so re-sent seqs already in the buffer are merged, not
 * stored twice. When the buffer is full the ingest stops taking (and so stops confirming) new
 * messages — they stay in the rigs' outboxes and come back later — and counts each one it turned
 * away in the durable `ingest_dropped` counter. In normal runs that counter stays 0.
 */
import type { Pool } from 'pg';
// From the modules themselves, not shared/mqtt's index: its re-exports compile to one shared keyed
// getter, which V8 does not inline (it was ~4 % of the ingest's CPU in the per-socket loops).
import {
  buildStoredCommands,
  parseCommandAck,
  parseStatus,
  parseTelemetry,
  telemetryTimeProblem,
  type CommandAck,
  type StoredCommand,
} from '../../../shared/mqtt/payloads';
import { storableText } from '../../../shared/storable-text';
import { parseRigTopic } from '../../../shared/mqtt/topics';
import { parseChamberReport, type ChamberReport } from '../../../shared/mqtt/chamber';
import { RIG_STATUS_CHANGED, TELEMETRY_LANDED, type EmberlotEventName, type EventBus } from '../../events';
import { COUNTERS, writeBatch, type BatchResult, type IngestItem } from './ingest-store';
import { RollupAccumulator, type RollupRow } from './rollups';

export interface IngestOptions {
  /** Messages per transaction (default 200). */
  maxBatch?: number;
  /** Longest wait for a batch to fill (default 50 ms). */
  windowMs?: number;
  /**
   * Transactions in flight at once (default 2): while one commits (a durable fsync) the next is
   * already being written, so neither this process nor PostgreSQL waits for the other. Their
   * effects (`stored`, TELEMETRY_LANDED) are still released in the order the batches were taken.
   */
  maxInFlight?: number;
  /**
   * Rollups are folded in memory and written at most this often (default 5,000 ms), in the next
   * ingest transaction (or one of their own when no telemetry comes): see rollups.ts.
   */
  rollupFlushMs?: number;
  /** Telemetry messages held while the database is unavailable (default 50,000). */
  bufferLimit?: number;
  /**
   * Back-pressure from the listeners of TELEMETRY_LANDED (default 1,000 messages): while more
   * committed messages than this wait for live protection or the thermal tracker
   * (`IngestDeps.listenerBacklog`), no new batch starts, so `stored` slows down and the rigs keep
   * their messages. Without it protection fell ~45,000 messages (~15 s) behind under the ingest
   * bench, and held them all in memory (bench/README.md "Ingest memory").
   */
  maxListenerBacklog?: number;
  /** Longest single hold for that back-pressure (default 1,000 ms): then one batch goes anyway. */
  maxBacklogHoldMs?: number;
  /** Rejections held for writing; beyond this only the counter grows (default 5,000). */
  rejectLimit?: number;
  retryMinMs?: number;
  retryMaxMs?: number;
  log?: (line: string) => void;
}

export interface IngestDeps {
  pool: () => Pool;
  events: EventBus;
  /** Publish one `stored` command to a rig (QoS 1). Returns false when it could not go out now. */
  publishStored: (rigCode: string, cmd: StoredCommand) => void;
  /** A valid command ack for the RigLink. */
  onAck?: (rigCode: string, ack: CommandAck) => void;
  /** A chamber's own report (shared/mqtt/chamber.ts), validated; stored by the chamber module. */
  onChamber?: (rigCode: string, report: ChamberReport, receivedAt: Date) => void;
  now?: () => Date;
  /** Landed messages the listeners have not handled yet (IngestOptions.maxListenerBacklog). */
  listenerBacklog?: () => number;
}

export interface IngestLiveStats {
  buffered: number;
  bufferLimit: number;
  databaseOk: boolean;
  batches: number;
  lastBatchMs: number | null;
  messagesStored: number;
  samplesStored: number;
  duplicates: number;
  rejected: number;
  dropped: number;
  merged: number;
}

const EXCERPT_CHARS = 300;
/** How often a loop held by the listeners' backlog looks again (ms). */
const BACKLOG_POLL_MS = 5;

/** A printable, bounded excerpt of a refused payload. */
export function excerptOf(payload: Buffer | string): string {
  const text = typeof payload === 'string' ? payload : payload.subarray(0, EXCERPT_CHARS * 4).toString('utf8');
  const clean = text.replace(/[\u0000-\u0008\u000b-\u001f\u007f]/g, '?');
  const size = typeof payload === 'string' ? payload.length : payload.byteLength;
  return clean.length > EXCERPT_CHARS ? `${clean.slice(0, EXCERPT_CHARS)}… (${size} bytes)` : clean;
}

const mismatch = (kind: string, bodyRig: string, topicRig: string) =>
  `${kind}: payload names rig ${bodyRig} but the topic is rig ${topicRig}`;

export class TelemetryIngest {
  private items: IngestItem[] = [];
  /** `${rigCode}|${seq}` of telemetry in the buffer (re-sends merge into it). */
  private keys = new Set<string>();
  private telemetryCount = 0;
  /** Highest valid telemetry seq received per rig code (RigLink.seqSeen). */
  private readonly seqSeenByRig = new Map<string, number>();
  private rejectCount = 0;
  private timer: ReturnType<typeof setTimeout> | null = null;
  private flushing: Promise<void> | null = null;
  private stopped = false;
  private databaseOk = true;
  private backoffMs: number;
  private pressureLogged = false;
  /** Counter deltas not yet written (turned-away messages, rejections beyond rejectLimit). */
  private pendingCounters: Record<string, number> = {};
  private storedCmdSeq = 0;
  private readonly bootId = Date.now().toString(36);
  private readonly opts: Required<Omit<IngestOptions, 'log'>> & { log: (line: string) => void };
  private readonly waiters = new Set<() => void>();
  private readonly rollups = new RollupAccumulator();
  private lastRollupFlush = Date.now();
  /** Rollup rows handed to a transaction in flight. */
  private rollupsInFlight = 0;
  /** drain(): write the held rollups now. */
  private flushRollupsNow = false;
  private rollupTimer: ReturnType<typeof setInterval> | null = null;
  readonly live = {
    batches: 0,
    lastBatchMs: null as number | null,
    messagesStored: 0,
    samplesStored: 0,
    duplicates: 0,
    rejected: 0,
    dropped: 0,
    merged: 0,
  };

  constructor(
    private readonly deps: IngestDeps,
    opts: IngestOptions = {},
  ) {
    this.opts = {
      maxBatch: opts.maxBatch ?? 200,
      windowMs: opts.windowMs ?? 50,
      maxInFlight: Math.max(1, opts.maxInFlight ?? 2),
      rollupFlushMs: opts.rollupFlushMs ?? 5_000,
      bufferLimit: opts.bufferLimit ?? 50_000,
      maxListenerBacklog: opts.maxListenerBacklog ?? 1_000,
      maxBacklogHoldMs: opts.maxBacklogHoldMs ?? 1_000,
      rejectLimit: opts.rejectLimit ?? 5_000,
      retryMinMs: opts.retryMinMs ?? 100,
      retryMaxMs: opts.retryMaxMs ?? 5_000,
      log: opts.log ?? ((line) => console.log(`[ingest] ${line}`)),
    };
    this.backoffMs = this.opts.retryMinMs;
    // Quiet rigs: held rollups still go out within about two flush intervals.
    this.rollupTimer = setInterval(() => {
      if (!this.stopped && !this.flushing && this.rollupsDue()) this.kick();
    }, this.opts.rollupFlushMs);
    (this.rollupTimer as { unref?: () => void }).unref?.();
  }

  private now(): Date {
    return this.deps.now ? this.deps.now() : new Date();
  }

  /** The highest valid telemetry seq received from the rig since this process started, or null. */
  seqSeen(rigCode: string): number | null {
    return this.seqSeenByRig.get(rigCode) ?? null;
  }

  stats(): IngestLiveStats {
    return {
      buffered: this.telemetryCount,
      bufferLimit: this.opts.bufferLimit,
      databaseOk: this.databaseOk,
      ...this.live,
    };
  }

  /** Every message from the server's subscriptions comes through here. Never throws. */
  handleMessage(topic: string, payload: Buffer): void {
    if (this.stopped) return;
    const receivedAt = this.now();
    const parsedTopic = parseRigTopic(topic);
    if (!parsedTopic) return this.reject(topic, null, 'topic is not a v1 rig topic', payload, receivedAt);
    const { rigCode, kind } = parsedTopic;
    if (kind === 'commands') return; // the server's own commands (not subscribed; ignored if seen)
    if (kind === 'command-acks') {
      const ack = parseCommandAck(payload);
      if (!ack.ok) return this.reject(topic, rigCode, `command-ack: ${ack.reason}`, payload, receivedAt);
      if (ack.data.rig !== rigCode) return this.reject(topic, rigCode, mismatch(kind, ack.data.rig, rigCode), payload, receivedAt);
      this.deps.onAck?.(rigCode, ack.data);
      return;
    }
    if (kind === 'chamber') {
      const rep = parseChamberReport(payload);
      if (!rep.ok) return this.reject(topic, rigCode, `chamber: ${rep.reason}`, payload, receivedAt);
      if (rep.data.rig !== rigCode) return this.reject(topic, rigCode, mismatch(kind, rep.data.rig, rigCode), payload, receivedAt);
      const late = telemetryTimeProblem(rep.data.ts, receivedAt.getTime());
      if (late) return this.reject(topic, rigCode, `chamber: ${late}`, payload, receivedAt);
      this.deps.onChamber?.(rigCode, rep.data, receivedAt);
      return;
    }
    if (kind === 'status') {
      const st = parseStatus(payload);
      if (!st.ok) return this.reject(topic, rigCode, `status: ${st.reason}`, payload, receivedAt);
      if (st.data.rig !== rigCode) return this.reject(topic, rigCode, mismatch(kind, st.data.rig, rigCode), payload, receivedAt);
      this.push({ kind: 'status', rigCode, status: st.data, receivedAt });
      return;
    }
    const tel = parseTelemetry(payload);
    if (!tel.ok) return this.reject(topic, rigCode, `telemetry: ${tel.reason}`, payload, receivedAt);
    if (tel.data.rig !== rigCode) return this.reject(topic, rigCode, mismatch(kind, tel.data.rig, rigCode), payload, receivedAt);
    const late = telemetryTimeProblem(tel.data.ts, receivedAt.getTime());
    if (late) return this.reject(topic, rigCode, `telemetry: ${late}`, payload, receivedAt);
    const seen = this.seqSeenByRig.get(rigCode);
    if (seen === undefined || tel.data.seq > seen) this.seqSeenByRig.set(rigCode, tel.data.seq);
    const key = `${rigCode}|${tel.data.seq}`;
    if (this.keys.has(key)) {
      this.live.merged++; // a re-send of a message still waiting here
      return;
    }
    if (this.telemetryCount >= this.opts.bufferLimit) {
      // Last resort: not taken, not confirmed. The rig still holds it and will send it again.
      this.live.dropped++;
      this.pendingCounters[COUNTERS.dropped] = (this.pendingCounters[COUNTERS.dropped] ?? 0) + 1;
      if (!this.pressureLogged) {
        this.pressureLogged = true;
        this.opts.log(
          `buffer full (${this.opts.bufferLimit} messages): new telemetry is not confirmed and stays with the rigs (counted in ${COUNTERS.dropped})`,
        );
      }
      return;
    }
    this.keys.add(key);
    this.telemetryCount++;
    this.push({ kind: 'telemetry', rigCode, msg: tel.data, receivedAt });
  }

  private reject(topic: string, rigCode: string | null, reason: string, payload: Buffer, receivedAt: Date): void {
    this.live.rejected++;
    if (this.rejectCount >= this.opts.rejectLimit) {
      this.pendingCounters[COUNTERS.rejected] = (this.pendingCounters[COUNTERS.rejected] ?? 0) + 1;
      return;
    }
    this.rejectCount++;
    // Storable whatever the payload held (a topic or reason may quote it): one bad row would fail its whole batch.
    this.push({
      kind: 'reject',
      topic: storableText(topic),
      rigCode,
      reason: storableText(reason.slice(0, 1000)),
      excerpt: storableText(excerptOf(payload)),
      receivedAt,
    });
  }

  private push(item: IngestItem): void {
    this.items.push(item);
    if (this.flushing) return; // the running loop picks it up
    if (this.items.length >= this.opts.maxBatch) this.kick();
    else if (!this.timer) this.timer = setTimeout(() => this.kick(), this.opts.windowMs);
  }

  private kick(): void {
    if (this.timer) {
      clearTimeout(this.timer);
      this.timer = null;
    }
    if (this.flushing || (!this.items.length && !this.rollupsDue())) return;
    this.flushing = this.loop().finally(() => {
      this.flushing = null;
      for (const w of this.waiters) w();
      this.waiters.clear();
      if (this.items.length && !this.stopped) this.push0();
    });
  }

  /** Re-arm after a loop ended with items left (they arrived while it was finishing). */
  private push0(): void {
    if (this.items.length >= this.opts.maxBatch) this.kick();
    else if (!this.timer) this.timer = setTimeout(() => this.kick(), this.opts.windowMs);
  }

  /**
   * Writes batches while there are items: a full batch starts whenever fewer than maxInFlight are
   * being written; a partial one only when nothing else is (it had its window to fill up). When a
   * write fails, the loop lets the others finish, puts every failed batch back at the front in its
   * original order, backs off and tries again.
   */
  private async loop(): Promise<void> {
    const running = new Set<Promise<void>>();
    const failed: Array<{ ticket: number; take: IngestItem[]; counters: Record<string, number>; rollups: RollupRow[]; err: Error }> = [];
    let ticket = 0;
    let first = true;
    // Effects of committed batches, released strictly in the order the batches were taken.
    let released: Promise<void> = Promise.resolve();
    let heldSince: number | null = null;
    for (;;) {
      while (!failed.length && (this.items.length || this.rollupsDue()) && running.size < this.opts.maxInFlight) {
        if (this.listenersBehind(heldSince)) {
          heldSince ??= Date.now();
          break;
        }
        heldSince = null;
        // A partial batch goes only as the first of this round (its window has passed); later ones
        // wait for the window again (push0 re-arms it when the loop ends).
        if (!first && this.items.length < this.opts.maxBatch && !this.rollupsDue()) break;
        first = false;
        const take = this.items.splice(0, this.opts.maxBatch);
        const counters = this.pendingCounters;
        this.pendingCounters = {};
        // Held rollups ride along when due; one transaction at a time carries them.
        const rollups = this.rollupsDue() ? this.rollups.take() : [];
        if (rollups.length) {
          this.rollupsInFlight = rollups.length;
          this.lastRollupFlush = Date.now();
        }
        const myTicket = ticket++;
        const t0 = Date.now();
        const write = writeBatch(this.deps.pool(), take, { counters, rollups }).then(
          (result) => ({ ok: true as const, result }),
          (err: Error) => ({ ok: false as const, err }),
        );
        const prev = released;
        const done = (released = (async () => {
          const outcome = await write;
          await prev;
          if (rollups.length) this.rollupsInFlight = 0;
          if (!outcome.ok) {
            failed.push({ ticket: myTicket, take, counters, rollups, err: outcome.err });
            return;
          }
          this.committed(take, outcome.result, t0);
        })());
        const tracked: Promise<void> = done.finally(() => running.delete(tracked));
        running.add(tracked);
      }
      if (running.size) {
        await Promise.race(running);
        continue;
      }
      if (heldSince !== null && !failed.length && !this.stopped && (this.items.length || this.rollupsDue())) {
        // Nothing in flight and the listeners behind: look again shortly.
        await new Promise((r) => setTimeout(r, BACKLOG_POLL_MS));
        continue;
      }
      if (!failed.length) break;
      // Every write has settled and some failed: back in front, in order; wait; try again.
      failed.sort((x, y) => x.ticket - y.ticket);
      this.items.unshift(...failed.flatMap((f) => f.take));
      for (const f of failed) {
        for (const [k, v] of Object.entries(f.counters)) this.pendingCounters[k] = (this.pendingCounters[k] ?? 0) + v;
        this.rollups.putBack(f.rollups);
      }
      const err = failed[failed.length - 1].err;
      failed.length = 0;
      if (this.databaseOk) {
        this.databaseOk = false;
        this.opts.log(`database write failed (${err.message}); holding ${this.telemetryCount} messages and retrying`);
      }
      if (this.stopped) return;
      await new Promise((r) => setTimeout(r, this.backoffMs));
      this.backoffMs = Math.min(this.backoffMs * 2, this.opts.retryMaxMs);
      if (this.stopped) return;
    }
  }

  /** A batch is durable: forget its keys, count it, confirm and announce it. */
  private committed(take: IngestItem[], result: BatchResult, t0: number): void {
    for (const it of take) {
      if (it.kind === 'telemetry') {
        this.keys.delete(`${it.rigCode}|${it.msg.seq}`);
        this.telemetryCount--;
      } else if (it.kind === 'reject') this.rejectCount--;
    }
    if (!this.databaseOk) {
      this.databaseOk = true;
      this.opts.log(`database back; ${this.telemetryCount} messages still waiting`);
    }
    if (this.pressureLogged && this.telemetryCount < this.opts.bufferLimit / 2) this.pressureLogged = false;
    this.backoffMs = this.opts.retryMinMs;
    this.live.batches++;
    this.live.lastBatchMs = Date.now() - t0;
    this.live.messagesStored += result.newMessages;
    this.live.samplesStored += result.sampleRows;
    this.live.duplicates += result.duplicates;
    // Fold only after COMMIT: a failed batch is retried and must not count twice.
    this.rollups.add(result.landed);
    this.afterCommit(result);
  }

  /**
   * True while TELEMETRY_LANDED's listeners have more than maxListenerBacklog messages to handle
   * and this hold (since `heldSince`) is shorter than maxBacklogHoldMs.
   */
  private listenersBehind(heldSince: number | null): boolean {
    const backlog = this.deps.listenerBacklog?.() ?? 0;
    if (backlog <= this.opts.maxListenerBacklog) return false;
    return heldSince === null || Date.now() - heldSince < this.opts.maxBacklogHoldMs;
  }

  /** Held rollups should go out with the next transaction. */
  private rollupsDue(): boolean {
    if (this.rollupsInFlight > 0 || this.rollups.pendingRows === 0) return false;
    return this.flushRollupsNow || Date.now() - this.lastRollupFlush >= this.opts.rollupFlushMs;
  }

  /** Rollup rows folded and not yet written (the live stats, tests). */
  get pendingRollupRows(): number {
    return this.rollups.pendingRows + this.rollupsInFlight;
  }

  private afterCommit(result: BatchResult): void {
    for (const [rigCode, seqs] of result.storedByRig) {
      for (const cmd of buildStoredCommands(seqs, () => `stored-${this.bootId}-${++this.storedCmdSeq}`)) {
        try {
          this.deps.publishStored(rigCode, cmd);
        } catch (err) {
          this.opts.log(`could not publish stored to ${rigCode}: ${(err as Error).message}`);
        }
      }
    }
    for (const landed of result.landed) {
      try {
        this.deps.events.emit(TELEMETRY_LANDED, landed);
      } catch (err) {
        this.listenerFailed(TELEMETRY_LANDED, err);
      }
    }
    for (const change of result.statusChanges) {
      try {
        this.deps.events.emit(RIG_STATUS_CHANGED, change);
      } catch (err) {
        this.listenerFailed(RIG_STATUS_CHANGED, err);
      }
    }
  }

  private listenerFailed(event: EmberlotEventName, err: unknown): void {
    this.opts.log(`a ${event} listener failed: ${(err as Error).message}`);
  }

  /** Resolves when everything buffered so far is written (tests, shutdown). */
  async drain(timeoutMs = 5_000): Promise<boolean> {
    const deadline = Date.now() + timeoutMs;
    this.flushRollupsNow = true;
    try {
      return await this.drainLoop(deadline);
    } finally {
      this.flushRollupsNow = false;
    }
  }

  private async drainLoop(deadline: number): Promise<boolean> {
    while (this.items.length || this.flushing || this.pendingRollupRows > 0) {
      if (Date.now() > deadline) return false;
      if (!this.flushing) this.kick();
      const f = this.flushing;
      if (f) await Promise.race([f, new Promise((r) => setTimeout(r, 50))]);
      else await new Promise((r) => setTimeout(r, 10));
    }
    return true;
  }

  /** Stop taking messages; try once more to write what is held (not confirmed otherwise: rigs replay it). */
  async stop(timeoutMs = 3_000): Promise<void> {
    if (this.rollupTimer) clearInterval(this.rollupTimer);
    this.rollupTimer = null;
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    const ok = await this.drain(timeoutMs);
    this.stopped = true;
    if (this.flushing) await Promise.race([this.flushing, new Promise((r) => setTimeout(r, timeoutMs))]);
    if (!ok && this.telemetryCount) this.opts.log(`stopped with ${this.telemetryCount} unwritten messages (the rigs still hold them)`);
  }
}
