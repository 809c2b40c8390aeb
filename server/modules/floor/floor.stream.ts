/**
 * Live floor updates over server-sent events (GET /api/floor/stream). ONE mechanism for the whole
 * app: rigs touched by TELEMETRY_LANDED / RIG_STATUS_CHANGED (and alarm / run events that name
 * a rig) are marked dirty; once a second the dirty rigs' tiles are read in one query and sent to
 * every open stream as `event: tile`. So each rig gets at most one event per second, and a
 * telemetry message reaches the screen within ingest window (50 ms) + ≤ 1 s + one query.
 * A comment line goes out every 15 s as a heartbeat.
 */
import type { Response } from 'express';
import type { FloorTile } from '../../../shared/schemas/floor';
import type { AppContext } from '../../context';
import { ALARM_EVENT, RIG_STATUS_CHANGED, RUN_EVENT, TELEMETRY_LANDED } from '../../events';
import type { FloorService } from './floor.service';

export const STREAM_TICK_MS = 1_000;
export const HEARTBEAT_MS = 15_000;

export class FloorStream {
  private readonly clients = new Set<Response>();
  private readonly dirty = new Set<string>();
  private tick: ReturnType<typeof setInterval> | null = null;
  private heartbeat: ReturnType<typeof setInterval> | null = null;
  private busy = false;
  /** Telemetry, status and run events name the rig; an alarm event carries it in `alarm`. */
  private readonly onRig = (e: { rigId?: string | null; alarm?: { rigId?: string | null } } | undefined) => {
    const rigId = e?.rigId ?? e?.alarm?.rigId;
    if (rigId && this.clients.size) this.dirty.add(rigId);
  };

  constructor(private readonly ctx: AppContext, private readonly floor: FloorService, private readonly tickMs = STREAM_TICK_MS) {}

  get size(): number {
    return this.clients.size;
  }

  add(res: Response): void {
    res.status(200);
    res.setHeader('Content-Type', 'text/event-stream; charset=utf-8');
    res.setHeader('Cache-Control', 'no-store');
    res.setHeader('Connection', 'keep-alive');
    res.setHeader('X-Accel-Buffering', 'no');
    res.flushHeaders();
    res.write(`retry: 3000\n: connected\n\n`);
    this.clients.add(res);
    res.on('close', () => {
      this.clients.delete(res);
      if (!this.clients.size) this.stopTimers();
    });
    this.startTimers();
  }

  private startTimers(): void {
    if (this.tick) return;
    this.ctx.events.on(TELEMETRY_LANDED, this.onRig);
    this.ctx.events.on(RIG_STATUS_CHANGED, this.onRig);
    this.ctx.events.on(ALARM_EVENT, this.onRig);
    this.ctx.events.on(RUN_EVENT, this.onRig);
    this.tick = setInterval(() => void this.flush(), this.tickMs);
    (this.tick as unknown as { unref?: () => void }).unref?.();
    this.heartbeat = setInterval(() => this.broadcast(`: heartbeat ${new Date().toISOString()}\n\n`), HEARTBEAT_MS);
    (this.heartbeat as unknown as { unref?: () => void }).unref?.();
  }

  private stopTimers(): void {
    if (this.tick) clearInterval(this.tick);
    if (this.heartbeat) clearInterval(this.heartbeat);
    this.tick = this.heartbeat = null;
    this.ctx.events.off(TELEMETRY_LANDED, this.onRig);
    this.ctx.events.off(RIG_STATUS_CHANGED, this.onRig);
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
    this.stopTimers();
  }
}
