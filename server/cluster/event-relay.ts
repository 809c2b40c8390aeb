/**
 * In-process events across API processes (EMBERLOT_WORKERS=elect). Events are emitted in the
 * process that did the work, but their listeners may live in another:
 *
 *  - RUN_EVENT and ALARM_EVENT from a standby's HTTP request (a run started, aborted or signed off,
 *    an alarm raised) must reach the leader's protection monitor (run context, alarm clearing on a
 *    state change), alarm notifications and run-event alarms — they run only there;
 *  - TELEMETRY_LANDED and RIG_STATUS_CHANGED (only in the leader) must reach the live floor's event
 *    stream wherever a browser holds it open.
 *
 * Each process sends what was emitted locally as a PostgreSQL NOTIFY on `emberlot_events`: run and
 * alarm events whole (JSON), telemetry and status as rig ids only, batched every `flushMs`; it
 * LISTENs on a connection of its own and, for a notification from another process, emits the run and
 * alarm events on its own bus (marked, so they are not sent on again) and marks the other rigs dirty
 * in its FloorStream. Each event's listeners thus run once, in the process that has them running.
 * A payload over NOTIFY's limit goes as its rig id only (the floor still follows; logged).
 *
 * The process that runs the ingest (the leader) also sends its live ingest figures every
 * `liveEveryMs` (buffer, batches, broker and database state, pending commands); a standby keeps the
 * last ones in `ctx.services.leaderLive` and answers /api/telemetry/stats with them and their age.
 */
import { Client } from 'pg';
import type { DbConfig } from '../config';
import type { AppContext } from '../context';
import { ALARM_EVENT, RIG_STATUS_CHANGED, RUN_EVENT, TELEMETRY_LANDED, type AlarmEvent, type RunEvent } from '../events';
import { pgPoolOf } from '../db/pool';
import { telemetryLiveSchema, type TelemetryLive } from '../../shared/schemas/rigs';
import { ownLiveFigures } from '../modules/telemetry/telemetry.service';
import { EVENTS_CHANNEL, notifyEvents } from './leadership.data';

/** NOTIFY payloads must stay under 8000 bytes; leave room for the envelope. */
const MAX_PAYLOAD = 7_500;

type Relayed = { from: string; run?: RunEvent[]; alarm?: AlarmEvent[]; rigs?: string[]; live?: { at: string; figures: TelemetryLive } };

/** How often the leader sends its live ingest figures to the other processes. */
export const LIVE_FIGURES_EVERY_MS = 2_000;
type Queued = { kind: 'run'; e: RunEvent } | { kind: 'alarm'; e: AlarmEvent };

export function startEventRelay(
  ctx: AppContext,
  origin: string,
  flushMs = 100,
  log = (l: string) => console.log(`[relay] ${l}`),
  liveEveryMs = LIVE_FIGURES_EVERY_MS,
): () => Promise<void> {
  const received = new WeakSet<object>(); // events this relay emitted itself: never sent on
  let queue: Queued[] = [];
  const rigs = new Set<string>();
  const onRun = (e: RunEvent) => {
    if (e && !received.has(e)) queue.push({ kind: 'run', e });
  };
  const onAlarm = (e: AlarmEvent) => {
    if (e && !received.has(e)) queue.push({ kind: 'alarm', e });
  };
  const onRig = (e: { rigId?: string | null } | undefined) => {
    if (e?.rigId) rigs.add(e.rigId);
  };
  ctx.events.on(RUN_EVENT, onRun);
  ctx.events.on(ALARM_EVENT, onAlarm);
  ctx.events.on(TELEMETRY_LANDED, onRig);
  ctx.events.on(RIG_STATUS_CHANGED, onRig);

  let sending = false;
  const flush = setInterval(async () => {
    if (sending || (!queue.length && !rigs.size)) return;
    sending = true;
    try {
      const batch = queue;
      queue = [];
      const ids = [...rigs];
      rigs.clear();
      for (const p of packPayloads(origin, batch, ids, log)) await notifyEvents(pgPoolOf(ctx), p);
    } catch {
      /* database down: the floor's next full read catches up; protection re-reads runs after its TTL */
    } finally {
      sending = false;
    }
  }, flushMs);

  // Only a process running the ingest has figures to send (ownLiveFigures is null on a standby).
  const liveTimer = setInterval(() => {
    const figures = ownLiveFigures(ctx);
    if (!figures) return;
    const msg: Relayed = { from: origin, live: { at: new Date().toISOString(), figures } };
    notifyEvents(pgPoolOf(ctx), JSON.stringify(msg)).catch(() => undefined); // database down: the next beat
  }, liveEveryMs);

  const deliver = (payload: string) => {
    let msg: Relayed;
    try {
      msg = JSON.parse(payload) as Relayed;
    } catch {
      return;
    }
    if (msg.from === origin) return; // this process handled its own events already
    for (const e of msg.run ?? []) {
      received.add(e);
      ctx.events.emit(RUN_EVENT, e);
    }
    for (const e of msg.alarm ?? []) {
      received.add(e);
      ctx.events.emit(ALARM_EVENT, e);
    }
    for (const id of msg.rigs ?? []) ctx.services.floorStream.markRigDirty(id);
    if (msg.live) keepLeaderLive(ctx, msg.from, msg.live);
  };

  const listener = listenForEvents(ctx.config.db, deliver);

  return async () => {
    clearInterval(flush);
    clearInterval(liveTimer);
    ctx.events.off(RUN_EVENT, onRun);
    ctx.events.off(ALARM_EVENT, onAlarm);
    ctx.events.off(TELEMETRY_LANDED, onRig);
    ctx.events.off(RIG_STATUS_CHANGED, onRig);
    await listener.stop();
  };
}

/** A standby keeps the leader's figures (checked: they come from another process). */
function keepLeaderLive(ctx: AppContext, from: string, live: unknown): void {
  if (typeof live !== 'object' || live === null) return;
  const { at, figures } = live as { at?: unknown; figures?: unknown };
  const parsed = telemetryLiveSchema.safeParse(figures);
  if (!parsed.success || typeof at !== 'string' || Number.isNaN(Date.parse(at))) return;
  ctx.services.leaderLive = { processId: from, measuredAt: at, receivedAtMs: Date.now(), live: parsed.data };
}

/** NOTIFY payloads of at most MAX_PAYLOAD characters, events in emission order, then the rig ids. */
function packPayloads(origin: string, queue: Queued[], rigIds: string[], log: (l: string) => void): string[] {
  const out: string[] = [];
  const rigs = new Set(rigIds);
  let cur: Relayed = { from: origin };
  let size = JSON.stringify(cur).length;
  const flushCur = () => {
    if (cur.run || cur.alarm || cur.rigs) out.push(JSON.stringify(cur));
    cur = { from: origin };
    size = JSON.stringify(cur).length;
  };
  const add = (key: 'run' | 'alarm' | 'rigs', item: unknown) => {
    const text = JSON.stringify(item);
    if (text.length + 16 > MAX_PAYLOAD) return false;
    if (size + text.length + 16 > MAX_PAYLOAD) flushCur();
    (cur[key] ??= [] as never[]).push(item as never);
    size += text.length + 16;
    return true;
  };
  for (const q of queue) {
    if (add(q.kind, q.e)) continue;
    const rigId = q.kind === 'run' ? q.e.rigId : q.e.alarm.rigId;
    log(`a ${q.kind} event too large for NOTIFY went to the other processes as its rig only`);
    if (rigId) rigs.add(rigId);
  }
  for (const r of rigs) add('rigs', r);
  flushCur();
  return out;
}

/** LISTEN on a connection of its own, reconnecting after a second when it fails. */
function listenForEvents(db: DbConfig, deliver: (payload: string) => void): { stop(): Promise<void> } {
  let listener: Client | null = null;
  let stopped = false;
  const listen = async () => {
    if (stopped) return;
    const c = new Client({ ...db, application_name: 'emberlot-event-relay', keepAlive: true });
    let retried = false;
    const retry = () => {
      if (retried) return;
      retried = true;
      if (listener === c) listener = null;
      void c.end().catch(() => undefined);
      if (!stopped) setTimeout(() => void listen(), 1_000);
    };
    c.on('notification', (n) => {
      if (n.channel === EVENTS_CHANNEL && n.payload) deliver(n.payload);
    });
    c.on('error', retry);
    try {
      await c.connect();
      await c.query(`LISTEN ${EVENTS_CHANNEL}`);
      if (stopped) await c.end().catch(() => undefined);
      else listener = c;
    } catch {
      retry();
    }
  };
  void listen();
  return {
    stop: async () => {
      stopped = true;
      const c = listener;
      listener = null;
      if (c) await c.end().catch(() => undefined);
    },
  };
}
