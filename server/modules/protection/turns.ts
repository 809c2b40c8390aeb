/**
 * Turns of the event loop for work that arrives in bursts. `next()` resolves in a later turn, at
 * most `perTurn` waiters released per turn — or a quarter of the backlog when that is more, so the
 * work never falls behind its arrivals for long. Live protection waits here before judging each
 * telemetry message: a committed batch lands hundreds at once, and with one `setImmediate` each,
 * every rig's next message ran in the same turn (40 rigs: ~3 ms), while each of the ingest's round
 * trips to PostgreSQL waited that long for its reply to be read.
 *
 * The backlog is the caller's when it keeps more than the gate sees: protection queues each rig's
 * messages behind one another, so at most one per rig waits here while thousands may wait in
 * total. Counting only the gate's queue (≤ rigs) capped it at ~10 messages per turn and let it
 * fall ~45,000 messages behind under the ingest bench.
 */
export class TurnGate {
  private readonly queue: Array<() => void> = [];
  private armed = false;

  constructor(
    readonly perTurn: number,
    /** Work waiting in all, this gate's waiters included (default: the waiters alone). */
    private readonly backlog: () => number = () => this.queue.length,
  ) {}

  /** Waiters not yet released. */
  get waiting(): number {
    return this.queue.length;
  }

  next(): Promise<void> {
    return new Promise<void>((resolve) => {
      this.queue.push(resolve);
      if (!this.armed) {
        this.armed = true;
        setImmediate(this.release);
      }
    });
  }

  private readonly release = (): void => {
    const q = this.queue;
    const n = Math.min(q.length, Math.max(this.perTurn, Math.ceil(Math.max(q.length, this.backlog()) / 4)));
    // Resolved now, their continuations run in the microtasks right after this callback.
    for (const resolve of q.splice(0, n)) resolve();
    if (q.length) setImmediate(this.release);
    else this.armed = false;
  };
}
