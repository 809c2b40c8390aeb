/**
 * The analysis of one part number (device type): every lot of the part on its chosen run, with the
 * drift of every device, because each lot is judged against its sister lots. One lot's page needs
 * all of it, so it is built once per part and kept in PartCache until the data it read changes.
 *
 * Reads are raw SQL of only the columns the analysis uses (hydrating ~40 k MeasurementEntity rows
 * per request cost seconds), all inside one REPEATABLE READ snapshot so the versions that key the
 * cache describe exactly the rows that were analysed.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { LotVerdict } from '../../../shared/schemas/analytics';
import type { Criteria } from '../../../shared/schemas/plans';
import type { PlanKind } from '../../../shared/domain/stress';
import type { MeasurementResult } from '../../../shared/evidence';
import type { StressSegment } from '../../../shared/reliability';
import type { CyclingExposure } from '../../../shared/reliability/mechanisms';
import { judgeLot, controlValues, type LotJudgement } from '../../../shared/verdict/judge';
import {
  dateFromDateCode,
  planConditionsKey,
  type DeviceEvidence,
  type LotEvidence,
  type PeerLot,
  type PlanEvidence,
} from '../../../shared/verdict/evidence';
import { runDrift, type DriftReading, type DriftSource } from '../measurements/measurements.service';
import { lotCore, stressTemperature, type LotFigures } from './lot-analysis';

export interface Analysed {
  core: LotFigures;
  verdict: LotVerdict;
  reasons: string[];
  judgement: LotJudgement;
  evidence: LotEvidence;
  otherRuns: Array<{ id: string; code: string; state: string }>;
  gainReference: { referenceC: number; xtb: number };
  /** The part's other lots' control values (what the judge compared with; the forecast's history re-judges with them). */
  peers: PeerLot[];
}

interface TypeRow {
  id: string;
  partNumber: string;
  betaRefTC: number;
  xtb: number;
}
interface LotRow {
  id: string;
  code: string;
  deviceTypeId: string;
  dateCode: string;
}
/** What a lot's page shows of a run; changes while the run accrues hours. */
interface RunStatus {
  id: string;
  code: string;
  state: string;
  stressHours: number;
}
interface RunRow extends RunStatus {
  planId: string;
  createdAt: Date;
  /** The sample the run belongs to (runs booked together across rigs share one); null = the run alone. */
  sampleId: string | null;
  rigCode: string | null;
}
interface SampleRow {
  id: string;
  plannedSize: number;
  bookedSize: number;
  deviationReason: string | null;
  deviationBy: string | null;
  deviationAt: Date | null;
}
/** A socket's credited hours and trip (changes while the run stresses: read with the run status). */
interface SocketHours {
  accruedHours: number;
  /** Credited hours by estimated junction temperature (run_sockets.stress_segments). */
  segments: StressSegment[] | null;
  /**
   * Power cycling (run_sockets.cycles_done, last_d_tj_low_c): credited cycles and the smallest junction
   * swing last reported — the smaller swing, so Coffin–Manson never credits more than was seen.
   */
  cycling: CyclingExposure | null;
  tripped: boolean;
  trippedAt: string | null;
  tripReason: string | null;
}
/** What the verdict reads of a reading beyond the drift's columns. */
interface ReadingExtra {
  result: MeasurementResult;
  hfeIcA: number | null;
  hfeVceV: number | null;
  icboVcbV: number | null;
  bvceoV: number | null;
  measuredAt: string | null;
  conditionsFlag: string | null;
  confirmedAt: string | null;
  confirmedBy: string | null;
  confirmReason: string | null;
}
interface DispositionRow {
  runId: string;
  deviceId: string;
  readPointH: number;
  kind: DeviceEvidence['dispositions'][number]['kind'];
  reason: string;
  byName: string;
  at: string;
}
interface PlanRow {
  id: string;
  name: string;
  version: number;
  kind: string;
  humidityPct: number | null;
  bias: { vcbV: number | null; vebV: number | null; vceV: number | null; ibA: number | null; icA: number | null };
  cycle: { onMin: number; offMin: number; deltaTjC: number; cycles: number } | null;
  durationH: number;
  acceptNumber: number;
  sampleSize: number;
  chamberC: number;
  eaEv: number;
  useC: number;
  readPointsH: number[];
  criteria: Criteria;
  /** check_result → derived → tjC, the only part of the stored plan check the analysis reads. */
  tjC: unknown;
}

/** A device in a run's socket map, as drift needs it. */
type SocketDevice = DriftSource['devices'][number];

/** Everything the analysis of one part reads, as plain rows. */
export interface PartData {
  type: TypeRow;
  /** Lot-code order (PostgreSQL's collation, as the lists always were). */
  lots: LotRow[];
  runLots: Array<{ runId: string; lotId: string }>;
  runs: Map<string, RunRow>;
  plans: Map<string, PlanRow>;
  devicesByRun: Map<string, SocketDevice[]>;
  readingsByRun: Map<string, DriftReading[]>;
  /** Same order as readingsByRun. */
  extrasByRun: Map<string, ReadingExtra[]>;
  samples: Map<string, SampleRow>;
  dispositions: DispositionRow[];
  /** run:device → credited hours and trip. */
  sockets: Map<string, SocketHours>;
}

/** Two versions per part: see VERSION_SQL. */
export interface PartVersion {
  figures: string;
  runs: string;
}

/**
 * Versions of the rows each part's analysis reads, per device type.
 *
 * `figures` covers what the drift figures are computed from: the device type, its lots, their
 * run_lots, those runs' plans, socket maps (run, socket, device only), devices and measurements,
 * and of the runs themselves what decides which run a lot is judged on (plan, creation time,
 * aborted or not). `runs` covers the runs' rows as a whole: state, code and accrued hours only pass
 * through to the verdict and the page, so while a run accrues hours (an UPDATE every few seconds)
 * the figures stay cached and only the cheap judging is redone.
 *
 * Most terms are the xmin of a row version. Measurements have no updated_at (a corrected upload
 * replaces values in place and keeps created_at) and the run engine accrues hours with a plain
 * UPDATE that leaves runs.updated_at alone; xmin changes on every INSERT and UPDATE however it is
 * written. Row versions that disappear since the last look were committed before it and new ones
 * after it, so they never share an xmin: any insert, update or delete, a lot moving part or a run
 * linked or unlinked changes the multiset, and the sum of 64-bit hashes with it (barring a 64-bit
 * coincidence). run_sockets (accrued hours and trips are updated while a run stresses) and the
 * runs' choice columns are hashed by content instead, so those updates do not count. An update
 * that changes nothing read only costs a rebuild. One indexed pass: ~30 ms at 40 k readings.
 */
const VERSION_SQL = `
WITH lt AS (
  SELECT l.id, l.device_type_id AS tid, l.xmin FROM lots l WHERE l.device_type_id = ANY($1::uuid[])
), rl AS (
  SELECT lt.tid, x.run_id, x.xmin FROM run_lots x JOIN lt ON lt.id = x.lot_id
), r AS (
  SELECT DISTINCT rl.tid, rl.run_id, u.plan_id, u.xmin, concat_ws('|', u.id, u.plan_id, u.created_at, u.state = 'aborted', u.sample_id) AS choice
    FROM rl JOIN runs u ON u.id = rl.run_id
), v(tid, term) AS (
  SELECT id, 'x' || xmin FROM device_types WHERE id = ANY($1::uuid[])
  UNION ALL SELECT tid, 'x' || xmin FROM lt
  UNION ALL SELECT tid, 'x' || xmin FROM rl
  UNION ALL SELECT tid, 'c' || choice FROM r
  UNION ALL SELECT r.tid, 'x' || p.xmin FROM r JOIN stress_plans p ON p.id = r.plan_id
  UNION ALL SELECT r.tid, 'c' || concat_ws('|', s.run_id, s.socket_index, s.device_id, s.tripped) FROM r JOIN run_sockets s ON s.run_id = r.run_id
  UNION ALL SELECT r.tid, 'x' || x.xmin FROM r JOIN device_dispositions x ON x.run_id = r.run_id
  UNION ALL SELECT DISTINCT r.tid, 'x' || sa.xmin FROM r JOIN runs u ON u.id = r.run_id JOIN samples sa ON sa.id = u.sample_id
  UNION ALL SELECT r.tid, 'x' || d.xmin FROM r JOIN run_sockets s ON s.run_id = r.run_id JOIN devices d ON d.id = s.device_id
  UNION ALL SELECT r.tid, 'x' || m.xmin FROM r JOIN measurements m ON m.run_id = r.run_id
)
SELECT t.tid, t.figures, coalesce(u.runs, '0') AS runs
  FROM (SELECT tid, count(*)::text || ':' || sum(hashtextextended(term, 0))::text AS figures FROM v GROUP BY tid) t
  LEFT JOIN (SELECT tid, count(*)::text || ':' || sum(hashtextextended(xmin::text, 0))::text AS runs FROM r GROUP BY tid) u ON u.tid = t.tid`;

/** Versions per existing device type among `typeIds` (absent types are left out). */
export async function partVersions(m: EntityManager, typeIds: string[]): Promise<Map<string, PartVersion>> {
  if (!typeIds.length) return new Map();
  const rows: Array<{ tid: string; figures: string; runs: string }> = await m.query(VERSION_SQL, [typeIds]);
  return new Map(rows.map((r) => [r.tid, { figures: r.figures, runs: r.runs }]));
}

const RUN_STATUS_COLUMNS = `id, code, state, stress_hours AS "stressHours"`;

/** A stored float8 as JSON: PostgreSQL quotes NaN and ±Infinity; Number() reads them as pg does. */
const num = (v: unknown) => (typeof v === 'string' ? Number(v) : (v as number | null));

/** The part's rows, read with raw SQL (no entity hydration); null when the type is gone. */
export async function loadPart(m: EntityManager, typeId: string): Promise<PartData | null> {
  const [type]: TypeRow[] = await m.query(
    `SELECT id, part_number AS "partNumber", beta_ref_tc AS "betaRefTC", xtb FROM device_types WHERE id = $1`,
    [typeId],
  );
  if (!type) return null;
  const lots: LotRow[] = await m.query(
    `SELECT id, code, device_type_id AS "deviceTypeId", date_code AS "dateCode" FROM lots WHERE device_type_id = $1 ORDER BY code ASC`,
    [typeId],
  );
  const empty: PartData = {
    type,
    lots,
    runLots: [],
    runs: new Map(),
    plans: new Map(),
    devicesByRun: new Map(),
    readingsByRun: new Map(),
    extrasByRun: new Map(),
    samples: new Map(),
    dispositions: [],
    sockets: new Map(),
  };
  if (!lots.length) return empty;
  const runLots: PartData['runLots'] = await m.query(
    `SELECT run_id AS "runId", lot_id AS "lotId" FROM run_lots WHERE lot_id = ANY($1::uuid[])`,
    [lots.map((l) => l.id)],
  );
  const runIds = [...new Set(runLots.map((r) => r.runId))];
  if (!runIds.length) return { ...empty, runLots };
  const { runRows, planRows, sampleRows } = await loadRunRows(m, runIds);
  const devicesByRun = await loadSocketMaps(m, runIds);
  const { readingsByRun, extrasByRun } = await loadReadings(m, runIds);
  const dispositions = await loadDispositions(m, runIds);
  return {
    type,
    lots,
    runLots,
    runs: new Map(runRows.map((r) => [r.id, r])),
    plans: new Map(planRows.map((p) => [p.id, p])),
    devicesByRun,
    readingsByRun,
    extrasByRun,
    samples: new Map(sampleRows.map((x) => [x.id, x])),
    dispositions,
    sockets: await socketHours(m, runIds),
  };
}

/** The runs, their plans and their linked samples. */
async function loadRunRows(m: EntityManager, runIds: string[]) {
  const runRows: RunRow[] = await m.query(
    `SELECT u.id, u.code, u.state, u.stress_hours AS "stressHours", u.plan_id AS "planId", u.created_at AS "createdAt", u.sample_id AS "sampleId", g.code AS "rigCode"
       FROM runs u LEFT JOIN rigs g ON g.id = u.rig_id WHERE u.id = ANY($1::uuid[])`,
    [runIds],
  );
  const planRows: PlanRow[] = await m.query(
    `SELECT id, name, version, kind, humidity_pct AS "humidityPct", bias, cycle, duration_h AS "durationH", accept_number AS "acceptNumber", sample_size AS "sampleSize", chamber_c AS "chamberC",
            ea_ev AS "eaEv", use_c AS "useC", read_points_h AS "readPointsH", criteria, check_result #> '{derived,tjC}' AS "tjC"
       FROM stress_plans WHERE id = ANY($1::uuid[])`,
    [[...new Set(runRows.map((r) => r.planId))]],
  );
  const sampleIds = [...new Set(runRows.map((r) => r.sampleId).filter((x): x is string => !!x))];
  const sampleRows: SampleRow[] = sampleIds.length
    ? await m.query(
        `SELECT s.id, s.planned_size AS "plannedSize", s.booked_size AS "bookedSize", s.deviation_reason AS "deviationReason", u.name AS "deviationBy", s.deviation_at AS "deviationAt"
           FROM samples s LEFT JOIN users u ON u.id = s.deviation_by_id WHERE s.id = ANY($1::uuid[])`,
        [sampleIds],
      )
    : [];
  return { runRows, planRows, sampleRows };
}

/** The runs' socket maps: one JSON text per run (socket order), like the readings. */
async function loadSocketMaps(m: EntityManager, runIds: string[]): Promise<Map<string, SocketDevice[]>> {
  const socketMaps: Array<{ runId: string; devices: string }> = await m.query(
    `SELECT s.run_id AS "runId", json_agg(json_build_array(s.socket_index, s.device_id, d.serial, d.lot_id, l.code) ORDER BY s.socket_index)::text AS devices
       FROM run_sockets s JOIN devices d ON d.id = s.device_id JOIN lots l ON l.id = d.lot_id
      WHERE s.run_id = ANY($1::uuid[])
      GROUP BY s.run_id`,
    [runIds],
  );
  const devicesByRun = new Map<string, SocketDevice[]>();
  for (const { runId, devices } of socketMaps) {
    const rows = JSON.parse(devices) as Array<[number, string, string, string, string]>;
    devicesByRun.set(
      runId,
      rows.map(([socketIndex, deviceId, serial, lotId, lotCode]) => ({ deviceId, serial, lotId, lotCode, socketIndex })),
    );
  }
  return devicesByRun;
}

/** The runs' readings, split into what drift reads and what the verdict adds. */
async function loadReadings(m: EntityManager, runIds: string[]) {
  // One JSON text per run, a reading as [device, h, hFE, ICBO, VCE(sat), °C, late, …what the verdict
  // adds]: PostgreSQL does the per-value text work either way, but one JSON.parse per run costs a
  // fraction of node-pg building ~40 k row objects field by field.
  const perRun: Array<{ runId: string; readings: string }> = await m.query(
    `SELECT x.run_id AS "runId", json_agg(json_build_array(x.device_id, x.read_point_h, x.hfe, x.icbo_a, x.vcesat_v, x.measured_c, x.late,
              x.result, x.hfe_ic_a, x.hfe_vce_v, x.icbo_vcb_v, x.bvceo_v, x.measured_at, x.conditions_flag, x.confirmed_at, u.name, x.confirm_reason))::text AS readings
       FROM measurements x LEFT JOIN users u ON u.id = x.confirmed_by_id WHERE x.run_id = ANY($1::uuid[]) GROUP BY x.run_id`,
    [runIds],
  );
  const readingsByRun = new Map<string, DriftReading[]>();
  const extrasByRun = new Map<string, ReadingExtra[]>();
  for (const { runId, readings } of perRun) {
    const rows = JSON.parse(readings) as Array<
      [
        string,
        unknown,
        unknown,
        unknown,
        unknown,
        unknown,
        boolean,
        MeasurementResult,
        unknown,
        unknown,
        unknown,
        unknown,
        string | null,
        string | null,
        string | null,
        string | null,
        string | null,
      ]
    >;
    readingsByRun.set(
      runId,
      rows.map(([deviceId, h, hfe, icbo, vce, c, late]) => ({
        deviceId,
        readPointH: num(h)!,
        hfe: num(hfe),
        icboA: num(icbo),
        vcesatV: num(vce),
        measuredC: num(c)!,
        late,
      })),
    );
    extrasByRun.set(
      runId,
      rows.map((r) => ({
        result: r[7] ?? 'measured',
        hfeIcA: num(r[8]),
        hfeVceV: num(r[9]),
        icboVcbV: num(r[10]),
        bvceoV: num(r[11]),
        measuredAt: r[12],
        conditionsFlag: r[13],
        confirmedAt: r[14],
        confirmedBy: r[15],
        confirmReason: r[16],
      })),
    );
  }
  return { readingsByRun, extrasByRun };
}

/** The runs' device dispositions (times as ISO text). */
async function loadDispositions(m: EntityManager, runIds: string[]): Promise<DispositionRow[]> {
  const dispositions: DispositionRow[] = (
    await m.query(
      `SELECT run_id AS "runId", device_id AS "deviceId", read_point_h AS "readPointH", kind, reason, by_name AS "byName", at FROM device_dispositions WHERE run_id = ANY($1::uuid[])`,
      [runIds],
    )
  ).map((d: DispositionRow & { at: Date; readPointH: unknown }) => ({
    ...d,
    readPointH: num(d.readPointH)!,
    at: new Date(d.at).toISOString(),
  }));
  return dispositions;
}

/** Credited hours and trips of the runs' sockets, keyed run:device. */
async function socketHours(m: EntityManager, runIds: string[]): Promise<Map<string, SocketHours>> {
  if (!runIds.length) return new Map();
  const rows: Array<{
    runId: string;
    deviceId: string;
    accruedHours: number;
    tripped: boolean;
    trippedAt: Date | null;
    tripReason: string | null;
    segments: StressSegment[] | null;
    cyclesDone: number | null;
    dTjLowC: number | null;
  }> = await m.query(
    `SELECT run_id AS "runId", device_id AS "deviceId", accrued_hours AS "accruedHours", tripped, tripped_at AS "trippedAt", trip_reason AS "tripReason",
            stress_segments AS segments, cycles_done AS "cyclesDone", last_d_tj_low_c AS "dTjLowC"
       FROM run_sockets WHERE run_id = ANY($1::uuid[])`,
    [runIds],
  );
  return new Map(
    rows.map((r) => [
      `${r.runId}:${r.deviceId}`,
      {
        accruedHours: Number(r.accruedHours),
        segments: Array.isArray(r.segments) ? r.segments : null,
        // No cycles counted: none to credit (and no swing needed); cycles without a reported swing: unknown.
        cycling:
          Number(r.cyclesDone) === 0
            ? { cycles: 0, deltaTjC: 0 }
            : Number(r.dTjLowC) > 0
              ? { cycles: Number(r.cyclesDone), deltaTjC: Number(r.dTjLowC) }
              : null,
        tripped: r.tripped,
        trippedAt: r.trippedAt ? new Date(r.trippedAt).toISOString() : null,
        tripReason: r.tripReason,
      },
    ]),
  );
}

/** One sample of a lot under one plan: its runs and this lot's devices in them (without hours, which move). */
interface LotSample {
  planId: string;
  sampleId: string;
  runIds: string[];
  devices: Array<Omit<DeviceEvidence, 'creditedHours' | 'trip'>>;
}

/** One lot's figures, its samples per plan, and which runs its page names (their status is filled in per run version). */
interface LotEntry {
  figures: LotFigures;
  runId: string | null;
  otherRunIds: string[];
  gain: Analysed['gainReference'];
  lot: LotEvidence['lot'];
  samples: LotSample[];
  /** This lot's control values per plan sample, for the other lots' peer comparison. */
  peers: PeerLot[];
}

/**
 * Every lot of the part: its verdict from all the plans it was stressed under (shared/verdict), and
 * the figures (distributions per read point, the typical device's trend) of its most recent sample
 * with readings. The figures of all lots are built at once (any lot's peers are the others); the
 * verdicts on first use, so one lot's page judges one lot. Immutable apart from that memo: a change
 * of run status makes a new instance (withRuns).
 */
export class PartAnalysis {
  private readonly judged = new Map<string, Analysed>();
  private readonly index: Map<string, number>;
  private readonly cores: LotFigures[];
  private readonly peers: PeerLot[];

  private constructor(
    readonly deviceTypeId: string,
    readonly version: PartVersion,
    private readonly entries: LotEntry[],
    private readonly runs: ReadonlyMap<string, RunRow>,
    private readonly plans: ReadonlyMap<string, PlanRow>,
    private readonly samples: ReadonlyMap<string, SampleRow>,
    private readonly sockets: ReadonlyMap<string, SocketHours>,
    private readonly type: TypeRow,
  ) {
    this.index = new Map(entries.map((e, i) => [e.figures.lot.id, i]));
    this.cores = entries.map((e) => this.withStatus(e.figures, e.runId));
    this.peers = entries.flatMap((e) => e.peers);
  }

  static build(data: PartData, version: PartVersion): PartAnalysis {
    return new PartAnalysis(data.type.id, version, lotEntries(data), data.runs, data.plans, data.samples, data.sockets, data.type);
  }

  /** Run ids whose status the page shows (for withRuns). */
  get runIds(): string[] {
    return [...this.runs.keys()];
  }

  /** The same figures with the runs' current status (state, code, hours) and sockets' credited hours, judged afresh. */
  withRuns(runs: RunStatus[], sockets: Map<string, SocketHours>, version: PartVersion): PartAnalysis {
    const merged = new Map<string, RunRow>();
    for (const r of runs) {
      const before = this.runs.get(r.id);
      if (before) merged.set(r.id, { ...before, ...r });
    }
    return new PartAnalysis(this.deviceTypeId, version, this.entries, merged, this.plans, this.samples, sockets, this.type);
  }

  private status(runId: string): RunStatus {
    const r = this.runs.get(runId)!;
    return { id: r.id, code: r.code, state: r.state, stressHours: r.stressHours };
  }

  private withStatus(figures: LotFigures, runId: string | null): LotFigures {
    return { ...figures, run: runId ? this.status(runId) : null };
  }

  /** The lot's evidence with the runs' current status and the sockets' credited hours and trips. */
  private evidence(e: LotEntry): LotEvidence {
    const plans: PlanEvidence[] = e.samples.map((s) => {
      const plan = this.plans.get(s.planId)!;
      const sample = this.samples.get(s.sampleId);
      return {
        plan: planConditions(plan),
        runs: s.runIds.map((id) => {
          const r = this.runs.get(id)!;
          return { runId: r.id, runCode: r.code, rigCode: r.rigCode, state: r.state, stressHours: r.stressHours };
        }),
        deviation: sample?.deviationReason
          ? {
              sampleSize: sample.bookedSize,
              reason: sample.deviationReason,
              by: sample.deviationBy ?? 'unknown',
              at: sample.deviationAt ? new Date(sample.deviationAt).toISOString() : '',
            }
          : null,
        devices: s.devices.map((d) => {
          const sock = this.sockets.get(`${d.runId}:${d.deviceId}`);
          const run = this.runs.get(d.runId)!;
          return {
            ...d,
            // The socket's own accrual (a trip latches it); a socket that never accrued falls back on the run's hours.
            creditedHours: sock && (sock.accruedHours > 0 || sock.tripped) ? sock.accruedHours : run.stressHours,
            trip: sock?.tripped ? { atH: sock.accruedHours, at: sock.trippedAt, reason: sock.tripReason } : null,
            // Only with the socket's own accrual: a fallback on the run's hours has no history of its own.
            stressSegments: sock && (sock.accruedHours > 0 || sock.tripped) ? sock.segments : null,
            cycling: sock?.cycling ?? null,
          };
        }),
      };
    });
    return { lot: e.lot, gainReference: e.gain, plans };
  }

  lot(lotId: string): Analysed | undefined {
    const i = this.index.get(lotId);
    if (i === undefined) return undefined;
    let a = this.judged.get(lotId);
    if (!a) {
      const core = this.cores[i];
      const e = this.entries[i];
      const evidence = this.evidence(e);
      const judgement = judgeLot(evidence, this.peers);
      const otherRuns = e.otherRunIds.map((id) => {
        const r = this.runs.get(id)!;
        return { id: r.id, code: r.code, state: r.state };
      });
      a = {
        core,
        verdict: judgement.verdict,
        reasons: judgement.reasons,
        judgement,
        evidence,
        otherRuns,
        gainReference: e.gain,
        peers: this.peers,
      };
      this.judged.set(lotId, a);
    }
    return a;
  }

  /** Every lot, lot-code order. */
  all(): Analysed[] {
    return this.entries.map((e) => this.lot(e.figures.lot.id)!);
  }
}

function planConditions(plan: PlanRow): PlanEvidence['plan'] {
  return {
    planId: plan.id,
    name: plan.name,
    version: plan.version ?? null,
    kind: plan.kind as PlanKind,
    chamberC: plan.chamberC,
    humidityPct: plan.humidityPct ?? null,
    bias: {
      vcbV: plan.bias?.vcbV ?? null,
      vebV: plan.bias?.vebV ?? null,
      vceV: plan.bias?.vceV ?? null,
      ibA: plan.bias?.ibA ?? null,
      icA: plan.bias?.icA ?? null,
    },
    cycle: plan.cycle
      ? { onMin: plan.cycle.onMin, offMin: plan.cycle.offMin, deltaTjC: plan.cycle.deltaTjC, cycles: plan.cycle.cycles }
      : null,
    durationH: plan.durationH,
    readPointsH: [...plan.readPointsH].sort((a, b) => a - b),
    sampleSize: plan.sampleSize,
    acceptNumber: plan.acceptNumber,
    criteria: plan.criteria,
    eaEv: plan.eaEv,
    useC: plan.useC,
    ...stressTemperature({ kind: plan.kind, chamberC: plan.chamberC, checkResult: { derived: { tjC: plan.tjC } } }),
  };
}

/** The sample a run belongs to: its linked sample, else the run alone. */
const sampleOf = (r: RunRow) => r.sampleId ?? r.id;

function pushTo<K, V>(map: Map<K, V[]>, key: K, value: V) {
  const list = map.get(key);
  if (list) list.push(value);
  else map.set(key, [value]);
}

/** Lookups over the part's rows that every lot's choice reads. */
function partIndexes(data: PartData) {
  const { runs, devicesByRun, readingsByRun } = data;
  const measuredLotsByRun = new Map<string, Set<string>>();
  for (const [rid, ms] of readingsByRun) {
    const lotOf = new Map((devicesByRun.get(rid) ?? []).map((d) => [d.deviceId, d.lotId]));
    const measured = new Set<string>();
    for (const x of ms) {
      const lot = lotOf.get(x.deviceId);
      if (lot) measured.add(lot);
    }
    measuredLotsByRun.set(rid, measured);
  }
  const runIdsByLot = new Map<string, string[]>();
  for (const rl of data.runLots) pushTo(runIdsByLot, rl.lotId, rl.runId);
  const runsOfSample = new Map<string, RunRow[]>();
  for (const r of runs.values()) pushTo(runsOfSample, sampleOf(r), r);
  for (const list of runsOfSample.values()) list.sort((a, b) => a.code.localeCompare(b.code));
  const dispositionsOf = new Map<string, DispositionRow[]>();
  for (const d of data.dispositions) pushTo(dispositionsOf, `${d.runId}:${d.deviceId}`, d);
  return { measuredLotsByRun, runIdsByLot, runsOfSample, dispositionsOf };
}

type PartIndexes = ReturnType<typeof partIndexes>;

/** A lot's runs, its primary run and, per plan, the sample its evidence comes from. */
function chooseLotRuns(data: PartData, ix: PartIndexes, lot: LotRow) {
  const { runs } = data;
  const lotRuns = (ix.runIdsByLot.get(lot.id) ?? [])
    .map((id) => runs.get(id)!)
    .filter(Boolean)
    .sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime());
  const measured = (r: RunRow) => ix.measuredLotsByRun.get(r.id)?.has(lot.id) ?? false;
  const run = lotRuns.find(measured) ?? lotRuns.find((r) => r.state !== 'aborted') ?? null;
  // Per plan, the most recent sample with readings of this lot (else the most recent one not aborted).
  const byPlan = new Map<string, string>();
  for (const r of lotRuns) if (!byPlan.has(r.planId) && measured(r)) byPlan.set(r.planId, sampleOf(r));
  for (const r of lotRuns) if (!byPlan.has(r.planId) && r.state !== 'aborted') byPlan.set(r.planId, sampleOf(r));
  if (run) byPlan.set(run.planId, sampleOf(run));
  const sampleRunIds = (sid: string) => (ix.runsOfSample.get(sid) ?? []).filter((r) => lotRuns.includes(r)).map((r) => r.id);
  const primaryRunIds = run ? sampleRunIds(sampleOf(run)) : [];
  const sampleIds = [...byPlan.values()];
  const used = new Set(sampleIds.flatMap(sampleRunIds));
  return { lot, lotRuns, run, primaryRunIds, sampleIds, sampleRunIds, used };
}

type ChosenLot = ReturnType<typeof chooseLotRuns>;

/**
 * A run's drift covers all its lots' devices: computed once, and dropped after its last lot so
 * the drift views (several kB per device) never pile up for the whole part.
 */
function driftPerRun(data: PartData, chosen: ChosenLot[]) {
  const { type, plans, devicesByRun, readingsByRun } = data;
  const lotsLeft = new Map<string, number>();
  for (const c of chosen) for (const id of c.primaryRunIds) lotsLeft.set(id, (lotsLeft.get(id) ?? 0) + 1);
  const drift = new Map<string, ReturnType<typeof runDrift>>();
  return (run: RunRow) => {
    let d = drift.get(run.id);
    if (!d) {
      const plan = plans.get(run.planId)!;
      // Lot analytics reads the numbers only: the per-parameter reason texts are not built.
      d = runDrift({ run, plan, deviceType: type, devices: devicesByRun.get(run.id) ?? [] }, readingsByRun.get(run.id) ?? [], {
        reasons: false,
      });
      drift.set(run.id, d);
    }
    const left = lotsLeft.get(run.id)! - 1;
    lotsLeft.set(run.id, left);
    if (left === 0) drift.delete(run.id);
    return d;
  };
}

/** The plan as lotCore reads it. */
function lotCorePlan(plan: PlanRow) {
  return {
    id: plan.id,
    name: plan.name,
    kind: plan.kind,
    durationH: plan.durationH,
    acceptNumber: plan.acceptNumber,
    sampleSize: plan.sampleSize,
    chamberC: plan.chamberC,
    eaEv: plan.eaEv,
    useC: plan.useC,
    ...stressTemperature({ kind: plan.kind, chamberC: plan.chamberC, checkResult: { derived: { tjC: plan.tjC } } }),
    readPointsH: [...plan.readPointsH],
    criteria: plan.criteria,
  };
}

/** One run's readings as evidence, grouped by device (in reading order). */
function readingsByDevice(data: PartData, rid: string) {
  const extras = data.extrasByRun.get(rid) ?? [];
  const readings = data.readingsByRun.get(rid) ?? [];
  const byDevice = new Map<string, DeviceEvidence['readings']>();
  readings.forEach((r, i) => {
    const x = extras[i];
    const ev: DeviceEvidence['readings'][number] = {
      readPointH: r.readPointH,
      result: x.result,
      hfe: r.hfe,
      hfeIcA: x.hfeIcA,
      hfeVceV: x.hfeVceV,
      icboA: r.icboA,
      icboVcbV: x.icboVcbV,
      vcesatV: r.vcesatV,
      bvceoV: x.bvceoV,
      measuredC: r.measuredC,
      measuredAt: x.measuredAt,
      late: r.late,
      conditionDifferences: x.conditionsFlag ? [x.conditionsFlag] : [],
      confirmed: x.confirmedAt
        ? { by: x.confirmedBy ?? 'unknown', at: new Date(x.confirmedAt).toISOString(), note: x.confirmReason ?? '' }
        : null,
    };
    pushTo(byDevice, r.deviceId, ev);
  });
  return byDevice;
}

/** The lot's devices of one run with their readings and dispositions. */
function lotRunDevices(data: PartData, ix: PartIndexes, lotId: string, rid: string) {
  const byDevice = readingsByDevice(data, rid);
  return (data.devicesByRun.get(rid) ?? [])
    .filter((d) => d.lotId === lotId)
    .map((d) => ({
      deviceId: d.deviceId,
      serial: d.serial,
      runId: rid,
      socketIndex: d.socketIndex,
      readings: (byDevice.get(d.deviceId) ?? []).sort((a, b) => a.readPointH - b.readPointH),
      dispositions: (ix.dispositionsOf.get(`${rid}:${d.deviceId}`) ?? []).map((x) => ({
        kind: x.kind,
        readPointH: x.readPointH,
        reason: x.reason,
        by: x.byName,
        at: x.at,
      })),
    }));
}

/** One lot's entry: its figures, its samples as evidence and its peer values per sample. */
function lotEntry(data: PartData, ix: PartIndexes, c: ChosenLot, driftOf: (run: RunRow) => ReturnType<typeof runDrift>): LotEntry {
  const { type, runs, plans } = data;
  const { lot, lotRuns, run, primaryRunIds, sampleIds, sampleRunIds, used } = c;
  const gain = { referenceC: type.betaRefTC, xtb: type.xtb };
  const plan = run ? plans.get(run.planId)! : null;
  const { devices: _views, ...figures } = lotCore({
    lot: { id: lot.id, code: lot.code, deviceTypeId: lot.deviceTypeId, partNumber: type.partNumber, dateCode: lot.dateCode },
    run: run ? { id: run.id, code: run.code, state: run.state, stressHours: run.stressHours } : null,
    plan: plan ? lotCorePlan(plan) : null,
    devices: primaryRunIds.flatMap((id) => driftOf(runs.get(id)!).devices.filter((d) => d.lotId === lot.id)),
  });

  const samples: LotSample[] = sampleIds.map((sid) => {
    const runIds = sampleRunIds(sid);
    const devices = runIds.flatMap((rid) => lotRunDevices(data, ix, lot.id, rid));
    return { planId: runs.get(runIds[0])!.planId, sampleId: sid, runIds, devices };
  });
  const productionDate = dateFromDateCode(lot.dateCode);
  const lotEv: LotEvidence['lot'] = {
    id: lot.id,
    code: lot.code,
    partNumber: type.partNumber,
    deviceTypeId: lot.deviceTypeId,
    dateCode: lot.dateCode,
    productionDate,
    productionDateSource: productionDate ? 'date-code' : null,
  };
  const peers: PeerLot[] = samples.map((s) => {
    const pc = planConditions(plans.get(s.planId)!);
    const pe: PlanEvidence = {
      plan: pc,
      runs: [],
      deviation: null,
      devices: s.devices.map((d) => ({ ...d, creditedHours: 0, trip: null })),
    };
    return { lotId: lot.id, lotCode: lot.code, productionDate, conditionsKey: planConditionsKey(pc), values: controlValues(pe, gain) };
  });
  return {
    figures,
    runId: run?.id ?? null,
    otherRunIds: lotRuns.filter((r) => !used.has(r.id)).map((r) => r.id),
    gain,
    lot: lotEv,
    samples,
    peers,
  };
}

function lotEntries(data: PartData): LotEntry[] {
  const ix = partIndexes(data);
  const chosen = data.lots.map((lot) => chooseLotRuns(data, ix, lot));
  const driftOf = driftPerRun(data, chosen);
  return chosen.map((c) => lotEntry(data, ix, c, driftOf));
}

/**
 * Part analyses keyed by device type. Every read first asks PostgreSQL for the parts' current
 * versions (one query), so an upload or any other change is seen on the very next request: new
 * figures → rebuild; only run status changed → same figures, fresh status, judged again; else from
 * memory. At most `capacity` parts are kept (least recently used dropped; an entry is ~2 MB at
 * 100 lots × 77 devices, all judged). Concurrent misses for the same part and version share one
 * build. Callers get the cached objects themselves: responses are built from them, never changed.
 */
export class PartCache {
  private readonly entries = new Map<string, PartAnalysis>();
  private readonly building = new Map<string, Promise<PartAnalysis | null>>();

  constructor(
    private readonly ds: DataSource,
    private readonly capacity = 8,
  ) {}

  /**
   * The analyses of the given parts (all parts when `typeIds` is undefined), read in one REPEATABLE
   * READ snapshot so versions and rows agree. `lotId` instead resolves the lot's part first.
   */
  async get(sel: { typeIds?: string[] } | { lotId: string }): Promise<PartAnalysis[]> {
    return (await this.read(sel, false)).parts;
  }

  /** Every lot of the given parts (all parts when undefined) in lot-code order, as one list. */
  async lots(typeIds?: string[]): Promise<Analysed[]> {
    const { parts, order } = await this.read({ typeIds }, true);
    if (parts.length === 1) return parts[0].all();
    const byId = new Map<string, Analysed>();
    for (const p of parts) for (const a of p.all()) byId.set(a.core.lot.id, a);
    return order.map((id) => byId.get(id)).filter((a): a is Analysed => !!a);
  }

  private async read(
    sel: { typeIds?: string[] } | { lotId: string },
    ordered: boolean,
  ): Promise<{ parts: PartAnalysis[]; order: string[] }> {
    return this.ds.transaction('REPEATABLE READ', async (m) => {
      let typeIds: string[];
      if ('lotId' in sel) {
        typeIds = (await m.query(`SELECT device_type_id AS id FROM lots WHERE id = $1`, [sel.lotId])).map((r: { id: string }) => r.id);
      } else if (sel.typeIds) typeIds = sel.typeIds;
      else typeIds = (await m.query(`SELECT id FROM device_types`)).map((r: { id: string }) => r.id);
      const versions = await partVersions(m, typeIds);
      const parts: PartAnalysis[] = [];
      for (const [typeId, version] of versions) {
        const part = await this.part(m, typeId, version);
        if (part) parts.push(part);
      }
      // Lots of several parts interleave in PostgreSQL's collation order of their codes.
      const order: string[] =
        ordered && parts.length > 1
          ? (
              await m.query(`SELECT id FROM lots WHERE device_type_id = ANY($1::uuid[]) ORDER BY code ASC`, [
                parts.map((p) => p.deviceTypeId),
              ])
            ).map((r: { id: string }) => r.id)
          : [];
      return { parts, order };
    });
  }

  private async part(m: EntityManager, typeId: string, version: PartVersion): Promise<PartAnalysis | null> {
    const hit = this.entries.get(typeId);
    if (hit && hit.version.figures === version.figures) {
      const part =
        hit.version.runs === version.runs
          ? hit
          : hit.withRuns(
              await m.query(`SELECT ${RUN_STATUS_COLUMNS} FROM runs WHERE id = ANY($1::uuid[])`, [hit.runIds]),
              await socketHours(m, hit.runIds),
              version,
            );
      this.remember(part);
      return part;
    }
    const key = `${typeId}@${version.figures}@${version.runs}`;
    let pending = this.building.get(key);
    if (!pending) {
      pending = (async () => {
        const data = await loadPart(m, typeId);
        return data ? PartAnalysis.build(data, version) : null;
      })();
      this.building.set(key, pending);
      pending.finally(() => this.building.delete(key)).catch(() => undefined);
    }
    const part = await pending;
    if (part) this.remember(part);
    return part;
  }

  /** Most recently used last (Map order is insertion order). Versions are not ordered: the last built stays. */
  private remember(part: PartAnalysis) {
    this.entries.delete(part.deviceTypeId);
    this.entries.set(part.deviceTypeId, part);
    while (this.entries.size > this.capacity) this.entries.delete(this.entries.keys().next().value as string);
  }
}
