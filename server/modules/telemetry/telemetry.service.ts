import type { DataSource } from 'typeorm';
import type { RejectedMessage, TelemetryLive, TelemetryLiveSource, TelemetryStats } from '../../../shared/schemas/rigs';
import type { AppContext } from '../../context';
import { COUNTERS } from './ingest-store';
import { recentRejections, systemCounters } from './telemetry.data';

/** What admins and engineers see of the ingest: refused messages and the counters. */
export class TelemetryService {
  private readonly ds: DataSource;
  constructor(private readonly ctx: AppContext) {
    this.ds = ctx.ds;
  }

  async rejections(q: { limit: number; rig?: string }): Promise<RejectedMessage[]> {
    const rows = await recentRejections(this.ds, q.limit, q.rig ?? null);
    return rows.map((r) => ({
      id: String(r.id),
      at: r.at.toISOString(),
      topic: r.topic,
      rigCode: r.rig_code,
      reason: r.reason,
      excerpt: r.excerpt,
    }));
  }

  async stats(): Promise<TelemetryStats> {
    const rows = await systemCounters(this.ds);
    const counters: Record<string, number> = {};
    for (const name of Object.values(COUNTERS)) counters[name] = 0; // always shown, 0 included
    for (const r of rows) counters[r.name] = Number(r.value);
    const own = ownLiveFigures(this.ctx);
    if (own) {
      const processId = this.ctx.services.leadership?.status().processId ?? null;
      return { counters, live: own, liveSource: { kind: 'own', processId, measuredAt: this.ctx.now().toISOString(), ageSeconds: 0 } };
    }
    // A standby (EMBERLOT_WORKERS=elect) runs no ingest: the leader's figures as last relayed.
    const relayed = this.ctx.services.leaderLive;
    const ageMs = relayed ? Math.max(0, Date.now() - relayed.receivedAtMs) : Number.POSITIVE_INFINITY;
    if (!relayed || ageMs > LEADER_LIVE_MAX_AGE_MS) return { counters, live: null, liveSource: null };
    const liveSource: TelemetryLiveSource = {
      kind: 'leader',
      processId: relayed.processId,
      measuredAt: relayed.measuredAt,
      ageSeconds: Math.round(ageMs / 100) / 10,
    };
    return { counters, live: relayed.live, liveSource };
  }
}

/**
 * A standby shows the leader's relayed figures up to this age; older ones (the leader died and no
 * process leads yet) are not shown as live.
 */
export const LEADER_LIVE_MAX_AGE_MS = 60_000;

/** This process's own ingest figures, or null when it runs no ingest (a standby). */
export function ownLiveFigures(ctx: AppContext): TelemetryLive | null {
  const s = ctx.services.telemetryIngest?.stats();
  if (!s) return null;
  const link = ctx.services.rigLink;
  return {
    mqttConnected: link?.connected() ?? false,
    databaseOk: s.databaseOk,
    buffered: s.buffered,
    bufferLimit: s.bufferLimit,
    batches: s.batches,
    lastBatchMs: s.lastBatchMs,
    pendingCommands: link?.pendingCount?.() ?? 0,
  };
}
