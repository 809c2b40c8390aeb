/**
 * The live floor across API processes (EMBERLOT_WORKERS=elect). The events that mark a rig's tile
 * dirty (telemetry landed, rig status, alarms, runs) are emitted in the process that did the work —
 * telemetry and rig status only in the leader — while a browser's event stream may be held by any
 * process. Each process sends the rig ids it saw change as a PostgreSQL NOTIFY on `emberlot_floor`
 * (batched every `flushMs`, ids only) and LISTENs on a connection of its own; a notification marks
 * those rigs dirty in its FloorStream, which reads and sends their tiles on its next tick as usual.
 */
import { Client } from 'pg';
import type { AppContext } from '../context';
import { ALARM_EVENT, RIG_STATUS_CHANGED, RUN_EVENT, TELEMETRY_LANDED } from '../events';
import { pgPoolOf } from '../db/pool';
import { FLOOR_CHANNEL, notifyFloor } from './leadership.data';

/** Rig ids (uuid, 36 characters) per notification: well under NOTIFY's 8000-byte payload. */
const IDS_PER_NOTIFY = 150;

export function startFloorRelay(ctx: AppContext, origin: string, flushMs = 250): () => Promise<void> {
  const changed = new Set<string>();
  const onRig = (e: { rigId?: string | null; alarm?: { rigId?: string | null } } | undefined) => {
    const rigId = e?.rigId ?? e?.alarm?.rigId;
    if (rigId) changed.add(rigId);
  };
  for (const ev of [TELEMETRY_LANDED, RIG_STATUS_CHANGED, ALARM_EVENT, RUN_EVENT] as const) ctx.events.on(ev, onRig);
  let sending = false;
  const flush = setInterval(async () => {
    if (sending || !changed.size) return;
    sending = true;
    const ids = [...changed];
    changed.clear();
    try {
      for (let k = 0; k < ids.length; k += IDS_PER_NOTIFY)
        await notifyFloor(pgPoolOf(ctx), `${origin} ${ids.slice(k, k + IDS_PER_NOTIFY).join(',')}`);
    } catch {
      /* database down: the streams' next full read catches up */
    } finally {
      sending = false;
    }
  }, flushMs);

  let listener: Client | null = null;
  let stopped = false;
  const listen = async () => {
    if (stopped) return;
    const c = new Client({ ...ctx.config.db, application_name: 'emberlot-floor-relay', keepAlive: true });
    c.on('notification', (n) => {
      if (n.channel !== FLOOR_CHANNEL || !n.payload) return;
      const [from, list] = n.payload.split(' ');
      if (from === origin || !list) return; // this process marked them itself
      for (const id of list.split(',')) ctx.services.floorStream.markRigDirty(id);
    });
    c.on('error', () => {
      if (listener === c) listener = null;
      void c.end().catch(() => undefined);
      setTimeout(() => void listen(), 1_000);
    });
    try {
      await c.connect();
      await c.query(`LISTEN ${FLOOR_CHANNEL}`);
      listener = c;
    } catch {
      void c.end().catch(() => undefined);
      setTimeout(() => void listen(), 1_000);
    }
  };
  void listen();

  return async () => {
    stopped = true;
    clearInterval(flush);
    for (const ev of [TELEMETRY_LANDED, RIG_STATUS_CHANGED, ALARM_EVENT, RUN_EVENT] as const) ctx.events.off(ev, onRig);
    const c = listener;
    listener = null;
    if (c) await c.end().catch(() => undefined);
  };
}
