import type { DataSource } from 'typeorm';
import type { RejectedMessage, TelemetryStats } from '../../../shared/schemas/rigs';
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
    const ingest = this.ctx.services.telemetryIngest;
    const link = this.ctx.services.rigLink;
    const s = ingest?.stats();
    return {
      counters,
      live: s
        ? {
            mqttConnected: link?.connected() ?? false,
            databaseOk: s.databaseOk,
            buffered: s.buffered,
            bufferLimit: s.bufferLimit,
            batches: s.batches,
            lastBatchMs: s.lastBatchMs,
            pendingCommands: link?.pendingCount?.() ?? 0,
          }
        : null,
    };
  }
}
