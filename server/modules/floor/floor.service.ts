/**
 * The live floor: every rig as a tile (one query), a rig's socket board (two queries) and its
 * temperature chart downsampled in SQL.
 *
 * Chart rule (shared/domain/telemetry-tiers.ts `chartTier`): up to 30 minutes from the raw messages,
 * up to 2 days from the per-minute rollups, longer spans (up to a year) from the hourly rollups; a
 * coarser tier when the span starts before the finer tier's window. The answer's `source` names the
 * tier. Either way the span is cut into `points` equal buckets and each bucket gives avg / min / max,
 * so a series never has more than `points` points.
 *
 * The raw chart reads the window's messages by (rig_id, ts) in the day partitions the window spans,
 * each with its sockets' arrays (no per-socket rows since migration 1828…).
 * A raw-span chart older than the raw window reads the messages kept for good around trips, alarms
 * and read points (telemetry_kept, `readsKeptRaw`) when the span holds any; `keptRaw` says so.
 */
import { chamberStepOf } from '../../../shared/domain/chamber-methods';
import {
  type ChartPoint,
  type FloorChamber,
  type FloorBoard,
  type FloorChart,
  type FloorChartQuery,
  type FloorSocket,
  type FloorTile,
} from '../../../shared/schemas/floor';
import { ON_RIG_STATES } from '../../../shared/domain/run-states';
import { chartTier, readsKeptRaw } from '../../../shared/domain/telemetry-tiers';
import { isCyclingKind, PLAN_KINDS } from '../../../shared/domain/stress';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../context';
import { notFound } from '../../http/errors';
import { ALARM_EVENT, RUN_EVENT } from '../../events';
import { runCycleTarget, socketCyclesOfRun } from '../runs/cycles.data';
import { recentChamberSamples } from '../runs/chamber.data';
import { HOLD_PHASES, type HoldPhase } from '../../../shared/holds/sequence';
import {
  boardRows,
  chartRows,
  holdStepRows,
  keptRawExists,
  meanCaseTemps,
  newestBatchTs,
  newestCaseTemps,
  readTileRows,
  rigIdRows,
  type BoardRow,
  type TileRow,
} from './floor.data';
import { hottestByMean } from '../../../shared/domain/hottest-sockets';
import { junctionOf } from '../runs/stress-segments';

/** Reports on a chamber's page (at the demo's 0.4 s a report, about 1.5 wall minutes). */
export const CHAMBER_BOARD_POINTS = 240;
const round = (n: number, d = 2) => Math.round(n * 10 ** d) / 10 ** d;

function nextReadPoint(readPoints: number[] | null, index: number | null, stressHours: number): number | null {
  if (!readPoints?.length) return null;
  const sorted = [...readPoints].sort((a, b) => a - b);
  const byIndex = index !== null && index >= 0 && index < sorted.length ? sorted[index] : null;
  if (byIndex !== null && byIndex > stressHours) return byIndex;
  return sorted.find((h) => h > stressHours) ?? null;
}

export class FloorService {
  /**
   * The whole-floor query in flight, shared by every request that arrives while it runs (many
   * floor screens and polls ask at once; one statement answers them all). A change people make —
   * an alarm raised or acknowledged, a run moved (ALARM_EVENT / RUN_EVENT) — detaches it, so a request after
   * the change never gets an answer read before it. Telemetry is continuous and not waited for.
   */
  private shared: Promise<FloorTile[]> | null = null;

  constructor(private readonly ctx: AppContext) {
    const detach = () => {
      this.shared = null;
    };
    ctx.events.on(ALARM_EVENT, detach);
    ctx.events.on(RUN_EVENT, detach);
  }

  private toTile(r: TileRow): FloorTile {
    let run: FloorTile['run'] = null;
    if (r.run_id && r.run_code && r.run_state) {
      const stressHours = r.stress_hours ?? 0;
      // A cycling run's read points come in cycles (its run page shows them), not in chamber hours.
      const inHours = !PLAN_KINDS.some((k) => k === r.plan_kind && isCyclingKind(k));
      const next = r.run_state === 'stressing' && inHours ? nextReadPoint(r.read_points_h, r.next_read_point, stressHours) : null;
      const left = next !== null ? round(next - stressHours, 3) : null;
      // clockRate = stress hours per wall second in demo mode.
      const rate = this.ctx.config.clockRate > 0 ? this.ctx.config.clockRate : 1;
      run = {
        id: r.run_id,
        code: r.run_code,
        state: r.run_state,
        stressHours: round(stressHours, 3),
        nextReadPointH: next,
        hoursToNextReadPoint: left,
        nextReadPointEta: left !== null ? new Date(this.ctx.now().getTime() + (left / rate) * 1000).toISOString() : null,
      };
    }
    const loaded = r.run_id ? r.loaded : 0;
    return {
      rigId: r.id,
      code: r.code,
      name: r.name,
      location: r.location,
      active: r.active,
      online: r.online,
      lastSeenAt: r.last_seen_at ? r.last_seen_at.toISOString() : null,
      lastSampleAt: r.last_ts ? r.last_ts.toISOString() : null,
      chamberC: r.chamber_c,
      setpointC: r.setpoint_c,
      humidityPct: r.humidity_pct,
      maxTempC: r.max_temp_c,
      socketCount: r.socket_count,
      powered: r.powered,
      tripped: r.tripped,
      empty: Math.max(0, r.socket_count - loaded),
      maxCaseC: r.max_case_c,
      openAlarms: r.open_alarms,
      chamber: r.kind === 'chamber' ? chamberOfTile(r, loaded) : null,
      thermalFlags: (r.thermal_flags ?? []).map(Number),
      run,
    };
  }

  /** Every rig, or only these rig ids (the stream's deltas). */
  async tiles(rigIds?: string[]): Promise<FloorTile[]> {
    if (rigIds) return this.readTiles(rigIds);
    if (!this.shared) {
      const p: Promise<FloorTile[]> = this.readTiles().finally(() => {
        if (this.shared === p) this.shared = null;
      });
      this.shared = p;
    }
    return this.shared;
  }

  private async readTiles(rigIds?: string[]): Promise<FloorTile[]> {
    const rows = await readTileRows(this.ctx.ds, rigIds ?? null, ON_RIG_STATES);
    return rows.map((r) => this.toTile(r));
  }

  private async rigIdOf(code: string): Promise<string> {
    const rows = await rigIdRows(this.ctx.ds, code);
    if (!rows.length) throw notFound(`Rig ${code}`);
    return rows[0].id;
  }

  async board(code: string): Promise<FloorBoard> {
    const rigId = await this.rigIdOf(code);
    const [tile] = await this.tiles([rigId]);
    if (tile.chamber) {
      // A chamber has load positions, not biased sockets: its board is the air and load it reported.
      const rows = await recentChamberSamples(this.ctx.ds.manager, rigId, CHAMBER_BOARD_POINTS);
      return {
        tile,
        seq: rows.length ? rows[rows.length - 1].seq : null,
        sampleAt: tile.chamber.reportAt,
        sockets: [],
        chamberProfile: rows.map((x) => ({ t: x.ts.toISOString(), airC: round(x.airC), loadC: round(x.loadC) })),
      };
    }
    const rows = await boardRows(this.ctx.ds, rigId, tile.run?.id ?? null);
    const sockets: FloorSocket[] = rows.map((r) => ({
      index: r.socket,
      caseC: r.case_c,
      vV: r.v_v,
      iA: r.i_a,
      biasOn: r.bias_on ?? false,
      tripped: !!(r.tripped || r.run_tripped),
      serial: r.serial,
      tripReason: r.trip_reason,
      junction: socketJunction(r),
    }));
    if (tile.run) await addSocketCycles(this.ctx.ds.manager, tile.run.id, sockets);
    const hasSample = rows.some((r) => r.case_c !== null);
    return {
      tile,
      seq: hasSample ? Number(rows[0].last_seq) : null,
      sampleAt: tile.lastSampleAt,
      sockets,
    };
  }

  async chart(code: string, q: FloorChartQuery): Promise<FloorChart> {
    const rigId = await this.rigIdOf(code);
    // Default window: the hour up to the newest message (or now).
    let to = q.to ? new Date(q.to) : null;
    if (!to) {
      const [b] = await newestBatchTs(this.ctx.ds, rigId);
      to = b?.ts ? new Date(b.ts.getTime() + 1) : this.ctx.now();
    }
    const from = q.from ? new Date(q.from) : new Date(to.getTime() - 3_600_000);
    const spanMs = to.getTime() - from.getTime();
    const points = q.points;
    const bucketMs = spanMs / points;
    let sockets = q.sockets;
    if (!sockets) {
      // Highest mean over the shown window (HOTTEST_RULE_TEXT); before its first minute is summarised, the newest message.
      const toRows = (rows: Array<{ socket: number; mean_c: number | null }>) =>
        rows.map((r) => ({ socket: Number(r.socket), meanC: r.mean_c === null ? null : Number(r.mean_c) }));
      sockets = hottestByMean(toRows(await meanCaseTemps(this.ctx.ds, rigId, from, to)));
      if (!sockets.length) sockets = hottestByMean(toRows(await newestCaseTemps(this.ctx.ds, rigId)));
    }
    const nowMs = this.ctx.now().getTime();
    const windows = this.ctx.config.telemetryKeep;
    // A raw-span chart past the raw window reads the raw messages kept around trips, alarms and read points, when it holds any.
    const keptRaw = readsKeptRaw(from.getTime(), to.getTime(), nowMs, windows) && (await keptRawExists(this.ctx.ds, rigId, from, to));
    const source = keptRaw ? 'raw' : chartTier(from.getTime(), to.getTime(), nowMs, windows);
    const rows = await chartRows(this.ctx.ds, keptRaw ? 'kept' : source, rigId, from, to, bucketMs, points, sockets);
    const series = new Map<number, ChartPoint[]>();
    for (const r of rows) {
      const t = new Date(from.getTime() + (Number(r.k) + 0.5) * bucketMs).toISOString();
      let list = series.get(Number(r.socket));
      if (!list) series.set(Number(r.socket), (list = []));
      list.push({ t, avg: round(Number(r.avg)), min: round(Number(r.min)), max: round(Number(r.max)) });
    }
    return {
      from: from.toISOString(),
      to: to.toISOString(),
      source,
      keptRaw,
      bucketMs: Math.round(bucketMs),
      chamber: series.get(-1) ?? [],
      sockets: sockets.map((socket) => ({ socket, points: series.get(socket) ?? [] })),
      holdSteps: (await holdStepRows(this.ctx.ds, rigId, from, to)).flatMap((r) => {
        const step: HoldPhase | null = r.action === 'run.hold-phase' ? (HOLD_PHASES.find((p) => p === r.to) ?? null) : 'cool-under-bias';
        return step ? [{ t: new Date(r.at).toISOString(), runCode: r.code, step }] : [];
      }),
    };
  }
}

/** A chamber's part of its tile: the newest report, the programme's step, the cycle count. */
function chamberOfTile(r: TileRow, loaded: number): FloorChamber {
  const num = (x: number | null) => (x === null ? null : Number(x));
  const run = r.run_id && r.run_state ? { state: r.run_state, planKind: r.plan_kind, tcPhase: r.tc_phase } : null;
  return {
    type: r.min_temp_c !== null ? 'cycling' : r.max_pressure_k_pa !== null ? 'vessel' : 'oven',
    minTempC: num(r.min_temp_c),
    maxPressureKPa: num(r.max_pressure_k_pa),
    reportAt: r.cs_ts ? new Date(r.cs_ts).toISOString() : null,
    airC: num(r.cs_air_c),
    loadC: num(r.cs_load_c),
    setpointC: num(r.cs_setpoint_c),
    humidityPct: num(r.cs_humidity_pct),
    pressureKPa: num(r.cs_pressure_k_pa),
    doorOpen: r.cs_door_open,
    planKind: run ? r.plan_kind : null,
    step: chamberStepOf(run),
    cycles: run && r.plan_kind === 'tc' && r.tc_target !== null ? { done: Number(r.cycles_done ?? 0), target: Number(r.tc_target) } : null,
    loaded,
    excursionAlarms: r.excursion_alarms,
  };
}

/** A cycling run's per-socket cycles and last swing on the board's sockets (its devices only). */
/** The socket's junction estimate from the board's sample, with what it was computed from. */
function socketJunction(r: BoardRow): FloorSocket['junction'] {
  if (r.theta_jc === null || r.case_c === null || r.v_v === null) return null;
  const sample = { caseC: r.case_c, vV: r.v_v, iA: r.i_a ?? 0 };
  const tjC = junctionOf(sample, r.theta_jc);
  return tjC === null ? null : { tjC, caseC: r.case_c, thetaJcCPerW: r.theta_jc, powerW: Math.abs(sample.vV * sample.iA) };
}

async function addSocketCycles(m: EntityManager, runId: string, sockets: FloorSocket[]): Promise<void> {
  const target = await runCycleTarget(m, runId);
  if (target === null) return;
  const bySocket = new Map((await socketCyclesOfRun(m, runId)).map((c) => [c.socket, c]));
  for (const s of sockets) {
    const c = bySocket.get(s.index);
    if (c) s.cycles = { done: c.cyclesDone, target, lastDTjLowC: c.lastDTjLowC, lastDTjHighC: c.lastDTjHighC };
  }
}
