/**
 * Workers that fail over (EMBERLOT_WORKERS=elect): every API process serves HTTP; the background
 * workers (MQTT ingest, protection, scheduler, telemetry upkeep, re-planning) run only in the
 * process holding a PostgreSQL session-level advisory lock (`pg_try_advisory_lock`) on a dedicated
 * connection of its own. PostgreSQL releases the lock when that connection ends — the process was
 * killed, crashed or lost the network — and a standby, retrying every `retryMs`, takes it.
 *
 * The leader heartbeats on the same connection (`heartbeatMs`); if a heartbeat fails or takes longer
 * than `heartbeatTimeoutMs`, it can no longer be sure it holds the lock: it stops its workers at once
 * (the ingest's MQTT client id is shared, so a new leader's connect also takes the broker session
 * away from it) and, if they do not stop within `stopTimeoutMs`, the process exits so a supervisor
 * restarts it clean. No consensus of our own: the lock is PostgreSQL's.
 */
import * as os from 'node:os';
import { randomBytes } from 'node:crypto';
import { Client, type Pool } from 'pg';
import type { DbConfig } from '../config';
import { heartbeat, readLeader, tryLeaderLock, writeLeaderRow } from './leadership.data';

export type Role = 'leader' | 'standby';

export interface LeadershipStatus {
  mode: 'single' | 'elect';
  /** This process: `<host>:<pid>:<random>`. */
  processId: string;
  role: Role;
  /** When this process became leader (null while standby). */
  leaderSince: Date | null;
  /** Times this process took the leadership. */
  terms: number;
}

export interface LeaderElectionOptions {
  db: DbConfig;
  /** Start the workers; resolves to their stop function. */
  onLead: () => Promise<() => Promise<void>>;
  /** Called when this process stops being leader (after the workers stopped), and on becoming standby. */
  onStandby?: () => void;
  retryMs?: number;
  heartbeatMs?: number;
  heartbeatTimeoutMs?: number;
  stopTimeoutMs?: number;
  log?: (line: string) => void;
  /** What to do when the workers do not stop after losing the lock (default: exit 70). */
  onStuck?: () => void;
}

export function newProcessId(): string {
  return `${os.hostname()}:${process.pid}:${randomBytes(2).toString('hex')}`;
}

const withTimeout = <T>(p: Promise<T>, ms: number, what: string) =>
  new Promise<T>((resolve, reject) => {
    const t = setTimeout(() => reject(new Error(`${what} took longer than ${ms} ms`)), ms);
    p.then(
      (v) => (clearTimeout(t), resolve(v)),
      (e) => (clearTimeout(t), reject(e)),
    );
  });

export class LeaderElection {
  readonly processId = newProcessId();
  private client: Client | null = null;
  private role: Role = 'standby';
  private since: Date | null = null;
  private terms = 0;
  private stopWorkers: (() => Promise<void>) | null = null;
  private timer: ReturnType<typeof setTimeout> | null = null;
  private stopped = false;
  private lastError = '';
  private readonly log: (line: string) => void;
  private readonly retryMs: number;
  private readonly heartbeatMs: number;
  private readonly heartbeatTimeoutMs: number;
  private readonly stopTimeoutMs: number;

  constructor(private readonly opts: LeaderElectionOptions) {
    this.log = opts.log ?? ((l) => console.log(`[leader] ${l}`));
    this.retryMs = opts.retryMs ?? 1_000;
    this.heartbeatMs = opts.heartbeatMs ?? 1_000;
    this.heartbeatTimeoutMs = opts.heartbeatTimeoutMs ?? 3_000;
    this.stopTimeoutMs = opts.stopTimeoutMs ?? 10_000;
  }

  status(): LeadershipStatus {
    return { mode: 'elect', processId: this.processId, role: this.role, leaderSince: this.since, terms: this.terms };
  }

  start(): void {
    this.log(`${this.processId} standing by for the workers' leadership`);
    this.opts.onStandby?.();
    this.schedule(0);
  }

  private schedule(ms: number): void {
    if (this.stopped) return;
    this.timer = setTimeout(() => void this.tick(), ms);
  }

  private async connect(): Promise<Client> {
    const c = new Client({
      host: this.opts.db.host,
      port: this.opts.db.port,
      user: this.opts.db.user,
      password: this.opts.db.password,
      database: this.opts.db.database,
      application_name: `emberlot-leader ${this.processId}`.slice(0, 63),
      keepAlive: true,
      keepAliveInitialDelayMillis: 1_000,
      connectionTimeoutMillis: 5_000,
    });
    c.on('error', (err) => void this.lost(`leadership connection failed: ${err.message}`));
    await c.connect();
    return c;
  }

  private async tick(): Promise<void> {
    if (this.stopped) return;
    try {
      if (this.role === 'leader') {
        const ok = await withTimeout(heartbeat(this.client!, this.processId), this.heartbeatTimeoutMs, 'the heartbeat');
        if (!ok) throw new Error('the leader row names another process');
        this.schedule(this.heartbeatMs);
        return;
      }
      if (!this.client) this.client = await this.connect();
      if (await withTimeout(tryLeaderLock(this.client), this.heartbeatTimeoutMs, 'the lock attempt')) {
        this.since = await writeLeaderRow(this.client, { holder: this.processId, host: os.hostname(), pid: process.pid });
        this.role = 'leader';
        this.terms++;
        this.lastError = '';
        this.log(`${this.processId} is leader since ${this.since.toISOString()}: starting the workers`);
        this.stopWorkers = await this.opts.onLead();
        if (this.role !== 'leader') await this.stopNow(); // lost while starting
        this.schedule(this.heartbeatMs);
        return;
      }
      this.schedule(this.retryMs);
    } catch (err) {
      const msg = (err as Error).message;
      if (this.role === 'leader') await this.lost(msg);
      else {
        if (msg !== this.lastError) this.log(`standby: ${msg}; retrying every ${this.retryMs} ms`);
        this.lastError = msg;
        await this.dropClient();
      }
      this.schedule(this.retryMs);
    }
  }

  /** The lock can no longer be trusted: stop the workers now, then stand by again. */
  private async lost(why: string): Promise<void> {
    if (this.role !== 'leader' || this.stopped) return;
    this.role = 'standby';
    this.since = null;
    this.log(`${this.processId} lost the leadership (${why}): stopping the workers`);
    await this.stopNow();
    await this.dropClient();
    this.opts.onStandby?.();
  }

  private async stopNow(): Promise<void> {
    const stop = this.stopWorkers;
    this.stopWorkers = null;
    if (!stop) return;
    try {
      await withTimeout(stop(), this.stopTimeoutMs, 'stopping the workers');
    } catch (err) {
      this.log(`${(err as Error).message}: leaving the process so it restarts clean`);
      (this.opts.onStuck ?? (() => process.exit(70)))();
    }
  }

  private async dropClient(): Promise<void> {
    const c = this.client;
    this.client = null;
    if (c) await c.end().catch(() => undefined);
  }

  /** Shutdown: stop the workers, then release the lock (closing the session releases it). */
  async stop(): Promise<void> {
    this.stopped = true;
    if (this.timer) clearTimeout(this.timer);
    await this.stopNow();
    this.role = 'standby';
    this.since = null;
    await this.dropClient();
  }
}

/** /api/health's view of the leadership: this process and the one that leads. */
export async function leadershipReport(pool: Pool, self: LeadershipStatus | null) {
  if (!self) return { mode: 'single' as const, role: 'leader' as const };
  const row = await readLeader(pool);
  return {
    mode: self.mode,
    processId: self.processId,
    role: self.role,
    leader:
      row && row.lockHeld
        ? {
            processId: row.holder,
            host: row.host,
            pid: row.pid,
            since: row.since.toISOString(),
            heartbeatAt: row.heartbeatAt.toISOString(),
          }
        : null,
  };
}
