/**
 * Live floor updates over server-sent events (GET /api/floor/stream). ONE mechanism for the whole
 * app: rigs touched by TELEMETRY_LANDED / RIG_STATUS_CHANGED / CHAMBER_REPORTED (and alarm / run events that name
 * a rig) are marked dirty; once a second the dirty rigs' tiles are read in one query and sent to
 * every open stream as `event: tile`. So each rig gets at most one event per second, and a
 * telemetry message reaches the screen within ingest window (50 ms) + ≤ 1 s + one query.
 * A comment line goes out every 15 s as a heartbeat.
 *
 * A stream lives no longer than the session that opened it: sign-out ends it at once
 * (SESSION_ENDED); every SESSION_CHECK_MS one query finds the streams whose session expired or was
 * deleted (a deactivated user's, a changed role's or password's sessions are deleted) or whose
 * user is no longer active, and ends them with `event: end`.
 */
import { liveSessionIds } from './floor.data';
import type { Response } from 'express';
import type { FloorStreamEvent, FloorTile } from '../../../shared/schemas/floor';
import type { AppContext } from '../../context';
import {
  ALARM_EVENT,
  CHAMBER_REPORTED,
  RIG_STATUS_CHANGED,
  RUN_EVENT,
  SESSION_ENDED,
  TELEMETRY_LANDED,
  type SessionEnded,
} from '../../events';
import type { FloorService } from './floor.service';

export const STREAM_TICK_MS = 1_000;
export const HEARTBEAT_MS = 15_000;
/** How often open streams' sessions and users are checked (one query for all streams). */
export const SESSION_CHECK_MS = 2_000;

/** Who opened a stream: the session id (express-session's `req.sessionID`) and the user. */
export interface StreamOwner {
  sid: string;
  userId: string;
}

export class FloorStream {
  private readonly clients = new Set<Response>();
  private readonly owners = new Map<Response, StreamOwner>();
  private sessionCheck: ReturnType<typeof setInterval> | null = null;
  private checking = false;
  private readonly onSessionEnded = (e: SessionEnded | undefined) => {
    if (e?.sid) this.endWhere((o) => o.sid === e.sid, 'signed out');
  };
  private readonly dirty = new Set<string>();
  private tick: ReturnType<typeof setInterval> | null = null;
  private heartbeat: ReturnType<typeof setInterval> | null = null;
  private busy = false;
  /** Telemetry, status and run events name the rig; an alarm event carries it in `alarm`. */
  private readonly onRig = (e: { rigId?: string | null; alarm?: { rigId?: string | null } } | undefined) => {
    const rigId = e?.rigId ?? e?.alarm?.rigId;
    if (rigId && this.clients.size) this.dirty.add(rigId);
  };

  constructor(
    private readonly ctx: AppContext,
    private readonly floor: FloorService,
    private readonly tickMs = STREAM_TICK_MS,
    private readonly sessionCheckMs = SESSION_CHECK_MS,
  ) {}

  /** A rig changed in another API process (server/cluster/event-relay.ts): its tile goes out on the next tick. */
  markRigDirty(rigId: string): void {
    if (this.clients.size) this.dirty.add(rigId);
  }

  get size(): number {
    return this.clients.size;
  }

  add(res: Response, owner: StreamOwner): void {
    res.status(200);
    res.setHeader('Content-Type', 'text/event-stream; charset=utf-8');
    res.setHeader('Cache-Control', 'no-store');
    res.setHeader('Connection', 'keep-alive');
    res.setHeader('X-Accel-Buffering', 'no');
    res.flushHeaders();
    res.write(`retry: 3000\n: connected\n\n`);
    this.clients.add(res);
    this.owners.set(res, owner);
    res.on('close', () => {
      this.clients.delete(res);
      this.owners.delete(res);
      if (!this.clients.size) this.stopTimers();
    });
    this.startTimers();
  }

  private startTimers(): void {
    if (this.tick) return;
    this.ctx.events.on(TELEMETRY_LANDED, this.onRig);
    this.ctx.events.on(RIG_STATUS_CHANGED, this.onRig);
    this.ctx.events.on(CHAMBER_REPORTED, this.onRig);
    this.ctx.events.on(ALARM_EVENT, this.onRig);
    this.ctx.events.on(RUN_EVENT, this.onRig);
    this.tick = setInterval(() => void this.flush(), this.tickMs);
    (this.tick as unknown as { unref?: () => void }).unref?.();
    this.heartbeat = setInterval(() => this.broadcast(`: heartbeat ${new Date().toISOString()}\n\n`), HEARTBEAT_MS);
    (this.heartbeat as unknown as { unref?: () => void }).unref?.();
    this.ctx.events.on(SESSION_ENDED, this.onSessionEnded);
    this.sessionCheck = setInterval(() => void this.checkSessions(), this.sessionCheckMs);
    (this.sessionCheck as unknown as { unref?: () => void }).unref?.();
  }

  /** End (with `event: end` and the reason) every stream whose owner matches. */
  private endWhere(match: (o: StreamOwner) => boolean, reason: string): number {
    let n = 0;
    for (const [res, owner] of this.owners) {
      if (!match(owner)) continue;
      this.owners.delete(res);
      this.clients.delete(res);
      res.end(`event: end\ndata: ${JSON.stringify({ type: 'end', reason } satisfies FloorStreamEvent)}\n\n`);
      n++;
    }
    if (!this.clients.size) this.stopTimers();
    return n;
  }

  /** One query: the open streams' sessions that still exist, have not expired, and belong to an active user. */
  private async checkSessions(): Promise<void> {
    if (this.checking || !this.owners.size) return;
    this.checking = true;
    try {
      const sids = Array.from(new Set(Array.from(this.owners.values(), (o) => o.sid)));
      const live = await liveSessionIds(this.ctx.ds, sids);
      this.endWhere((o) => !live.has(o.sid), 'session ended');
    } catch {
      /* database hiccup: check again next time */
    } finally {
      this.checking = false;
    }
  }

  private stopTimers(): void {
    if (this.tick) clearInterval(this.tick);
    if (this.heartbeat) clearInterval(this.heartbeat);
    if (this.sessionCheck) clearInterval(this.sessionCheck);
    this.tick = this.heartbeat = this.sessionCheck = null;
    this.ctx.events.off(SESSION_ENDED, this.onSessionEnded);
    this.ctx.events.off(TELEMETRY_LANDED, this.onRig);
    this.ctx.events.off(RIG_STATUS_CHANGED, this.onRig);
    this.ctx.events.off(CHAMBER_REPORTED, this.onRig);
    this.ctx.events.off(ALARM_EVENT, this.onRig);
    this.ctx.events.off(RUN_EVENT, this.onRig);
    this.dirty.clear();
  }

  private broadcast(text: string): void {
    for (const res of this.clients) res.write(text);
  }

  private async flush(): Promise<void> {
    if (this.busy || !this.dirty.size) return;
    this.busy = true;
    const ids = Array.from(this.dirty);
    this.dirty.clear();
    try {
      const tiles: FloorTile[] = await this.floor.tiles(ids);
      for (const tile of tiles) this.broadcast(`event: tile\ndata: ${JSON.stringify({ type: 'tile', tile })}\n\n`);
    } catch {
      for (const id of ids) this.dirty.add(id); // database hiccup: try again next second
    } finally {
      this.busy = false;
    }
  }

  close(): void {
    for (const res of this.clients) res.end();
    this.clients.clear();
    this.owners.clear();
    this.stopTimers();
  }
}
