import type { DataSource } from 'typeorm';
import type { RejectedMessage, TelemetryStats } from '../../../shared/schemas/rigs';
import type { AppContext } from '../../context';
import { COUNTERS } from './ingest-store';

/** What admins and engineers see of the ingest: refused messages and the counters. */
export class TelemetryService {
  private readonly ds: DataSource;
  constructor(private readonly ctx: AppContext) {
    this.ds = ctx.ds;
  }

  async rejections(q: { limit: number; rig?: string }): Promise<RejectedMessage[]> {
    const rows: Array<{ id: string; at: Date; topic: string; rig_code: string | null; reason: string; excerpt: string }> = await this.ds.query(
      `SELECT id, at, topic, rig_code, reason, excerpt FROM rejected_messages
       WHERE ($1::varchar IS NULL OR rig_code = $1) ORDER BY id DESC LIMIT $2`,
      [q.rig ?? null, q.limit],
    );
    return rows.map((r) => ({ id: String(r.id), at: r.at.toISOString(), topic: r.topic, rigCode: r.rig_code, reason: r.reason, excerpt: r.excerpt }));
  }

  async stats(): Promise<TelemetryStats> {
    const rows: Array<{ name: string; value: string }> = await this.ds.query(`SELECT name, value FROM system_counters ORDER BY name`);
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
            samplesMode: s.samplesMode,
            pendingCommands: link?.pendingCount?.() ?? 0,
          }
        : null,
    };
  }
}
