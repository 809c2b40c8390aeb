/**
 * The rig's outbox: every telemetry message stays here until the server's `stored` command
 * confirms its seq. The broker's PUBACK only says the *broker* has it; a server crash after that
 * would lose it, so only the application-level acknowledgement removes an entry.
 */
import type { SeqRange } from '../shared/mqtt';

export interface OutboxEntry {
  seq: number;
  payload: string;
  /** Wall ms of the last (re)send; 0 = never sent. */
  lastSentMs: number;
}

export class Outbox {
  /** Insertion order = seq order (add() refuses anything not above the highest seq). */
  private readonly entries = new Map<number, OutboxEntry>();
  private highest = 0;
  /** Entries dropped because the outbox was full (oldest first). Should stay 0. */
  overflowDropped = 0;
  confirmed = 0;

  constructor(readonly limit = 50_000) {}

  get size(): number {
    return this.entries.size;
  }

  get highestSeq(): number {
    return this.highest;
  }

  add(seq: number, payload: string): void {
    if (!Number.isSafeInteger(seq) || seq <= this.highest) {
      throw new Error(`outbox seq must increase: got ${seq} after ${this.highest}`);
    }
    this.highest = seq;
    this.entries.set(seq, { seq, payload, lastSentMs: 0 });
    while (this.entries.size > this.limit) {
      const oldest = this.entries.keys().next().value as number;
      this.entries.delete(oldest);
      this.overflowDropped++;
    }
  }

  has(seq: number): boolean {
    return this.entries.has(seq);
  }

  /** Drop exactly the confirmed seqs; returns how many were removed. Unknown seqs are ignored. */
  confirm(ranges: readonly SeqRange[]): number {
    let removed = 0;
    for (const [from, to] of ranges) {
      if (to - from + 1 <= this.entries.size) {
        for (let s = from; s <= to; s++) if (this.entries.delete(s)) removed++;
      } else {
        for (const s of Array.from(this.entries.keys())) {
          if (s >= from && s <= to && this.entries.delete(s)) removed++;
        }
      }
    }
    this.confirmed += removed;
    return removed;
  }

  /** Every unconfirmed entry, in seq order (the replay after a reconnect). */
  pending(): OutboxEntry[] {
    return Array.from(this.entries.values());
  }

  /** Unconfirmed entries last sent at or before `nowMs - olderThanMs`, in seq order, at most `max`. */
  due(nowMs: number, olderThanMs: number, max = Infinity): OutboxEntry[] {
    const out: OutboxEntry[] = [];
    for (const e of this.entries.values()) {
      if (out.length >= max) break;
      if (e.lastSentMs <= nowMs - olderThanMs) out.push(e);
    }
    return out;
  }

  markSent(seq: number, nowMs: number): void {
    const e = this.entries.get(seq);
    if (e) e.lastSentMs = nowMs;
  }
}
