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
import { runDrift, type DriftReading, type DriftSource } from '../measurements/measurements.service';
import { controlChecks, judgeLot, lotCore, stressTemperature, type LotFigures } from './lot-analysis';

export interface Analysed {
  core: LotFigures;
  verdict: LotVerdict;
  reasons: string[];
  control: ReturnType<typeof controlChecks>;
  otherRuns: Array<{ id: string; code: string; state: string }>;
  gainReference: { referenceC: number; xtb: number };
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
}
interface PlanRow {
  id: string;
  name: string;
  kind: string;
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
  SELECT DISTINCT rl.tid, rl.run_id, u.plan_id, u.xmin, concat_ws('|', u.id, u.plan_id, u.created_at, u.state = 'aborted') AS choice
    FROM rl JOIN runs u ON u.id = rl.run_id
), v(tid, term) AS (
  SELECT id, 'x' || xmin FROM device_types WHERE id = ANY($1::uuid[])
  UNION ALL SELECT tid, 'x' || xmin FROM lt
  UNION ALL SELECT tid, 'x' || xmin FROM rl
  UNION ALL SELECT tid, 'c' || choice FROM r
  UNION ALL SELECT r.tid, 'x' || p.xmin FROM r JOIN stress_plans p ON p.id = r.plan_id
  UNION ALL SELECT r.tid, 'c' || concat_ws('|', s.run_id, s.socket_index, s.device_id) FROM r JOIN run_sockets s ON s.run_id = r.run_id
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
  const [type]: TypeRow[] = await m.query(`SELECT id, part_number AS "partNumber", beta_ref_tc AS "betaRefTC", xtb FROM device_types WHERE id = $1`, [typeId]);
  if (!type) return null;
  const lots: LotRow[] = await m.query(
    `SELECT id, code, device_type_id AS "deviceTypeId", date_code AS "dateCode" FROM lots WHERE device_type_id = $1 ORDER BY code ASC`,
    [typeId],
  );
  const empty: PartData = { type, lots, runLots: [], runs: new Map(), plans: new Map(), devicesByRun: new Map(), readingsByRun: new Map() };
  if (!lots.length) return empty;
  const runLots: PartData['runLots'] = await m.query(`SELECT run_id AS "runId", lot_id AS "lotId" FROM run_lots WHERE lot_id = ANY($1::uuid[])`, [
    lots.map((l) => l.id),
  ]);
  const runIds = [...new Set(runLots.map((r) => r.runId))];
  if (!runIds.length) return { ...empty, runLots };
  const runRows: RunRow[] = await m.query(
    `SELECT ${RUN_STATUS_COLUMNS}, plan_id AS "planId", created_at AS "createdAt" FROM runs WHERE id = ANY($1::uuid[])`,
    [runIds],
  );
  const planRows: PlanRow[] = await m.query(
    `SELECT id, name, kind, duration_h AS "durationH", accept_number AS "acceptNumber", sample_size AS "sampleSize", chamber_c AS "chamberC",
            ea_ev AS "eaEv", use_c AS "useC", read_points_h AS "readPointsH", criteria, check_result #> '{derived,tjC}' AS "tjC"
       FROM stress_plans WHERE id = ANY($1::uuid[])`,
    [[...new Set(runRows.map((r) => r.planId))]],
  );
  // The socket map as one JSON text per run (socket order), like the readings below.
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
  // One JSON text per run, a reading as [device, h, hFE, ICBO, VCE(sat), °C, late]: PostgreSQL does
  // the per-value text work either way, but one JSON.parse per run costs a fraction of node-pg
  // building ~40 k row objects field by field.
  const perRun: Array<{ runId: string; readings: string }> = await m.query(
    `SELECT run_id AS "runId", json_agg(json_build_array(device_id, read_point_h, hfe, icbo_a, vcesat_v, measured_c, late))::text AS readings
       FROM measurements WHERE run_id = ANY($1::uuid[]) GROUP BY run_id`,
    [runIds],
  );
  const readingsByRun = new Map<string, DriftReading[]>();
  for (const { runId, readings } of perRun) {
    const rows = JSON.parse(readings) as Array<[string, unknown, unknown, unknown, unknown, unknown, boolean]>;
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
  }
  return {
    type,
    lots,
    runLots,
    runs: new Map(runRows.map((r) => [r.id, r])),
    plans: new Map(planRows.map((p) => [p.id, p])),
    devicesByRun,
    readingsByRun,
  };
}

/** One lot's figures, and which runs its page names (their status is filled in per run version). */
interface LotEntry {
  figures: LotFigures;
  runId: string | null;
  otherRunIds: string[];
  gain: Analysed['gainReference'];
}

/**
 * Every lot of the part analysed on its most recent run that has readings for it (else its most
 * recent run that was not aborted). The figures of all lots are built at once (the control checks
 * of any lot compare it with all of them); the verdicts on first use, so one lot's page judges one
 * lot. Immutable apart from that memo: a change of run status makes a new instance (withRuns).
 */
export class PartAnalysis {
  private readonly judged = new Map<string, Analysed>();
  private readonly index: Map<string, number>;
  private readonly cores: LotFigures[];

  private constructor(
    readonly deviceTypeId: string,
    readonly version: PartVersion,
    private readonly entries: LotEntry[],
    private readonly runs: ReadonlyMap<string, RunStatus>,
  ) {
    this.index = new Map(entries.map((e, i) => [e.figures.lot.id, i]));
    this.cores = entries.map((e) => this.withStatus(e.figures, e.runId));
  }

  static build(data: PartData, version: PartVersion): PartAnalysis {
    return new PartAnalysis(data.type.id, version, lotEntries(data), data.runs);
  }

  /** Run ids whose status the page shows (for withRuns). */
  get runIds(): string[] {
    return [...this.runs.keys()];
  }

  /** The same figures with the runs' current status (state, code, hours), judged afresh. */
  withRuns(runs: RunStatus[], version: PartVersion): PartAnalysis {
    return new PartAnalysis(this.deviceTypeId, version, this.entries, new Map(runs.map((r) => [r.id, r])));
  }

  private status(runId: string): RunStatus {
    const r = this.runs.get(runId)!;
    return { id: r.id, code: r.code, state: r.state, stressHours: r.stressHours };
  }

  private withStatus(figures: LotFigures, runId: string | null): LotFigures {
    return { ...figures, run: runId ? this.status(runId) : null };
  }

  lot(lotId: string): Analysed | undefined {
    const i = this.index.get(lotId);
    if (i === undefined) return undefined;
    let a = this.judged.get(lotId);
    if (!a) {
      const core = this.cores[i];
      const e = this.entries[i];
      const control = controlChecks(core, this.cores);
      const { verdict, reasons } = judgeLot(core, control);
      const otherRuns = e.otherRunIds.map((id) => {
        const r = this.runs.get(id)!;
        return { id: r.id, code: r.code, state: r.state };
      });
      a = { core, verdict, reasons, control, otherRuns, gainReference: e.gain };
      this.judged.set(lotId, a);
    }
    return a;
  }

  /** Every lot, lot-code order. */
  all(): Analysed[] {
    return this.entries.map((e) => this.lot(e.figures.lot.id)!);
  }
}

function lotEntries(data: PartData): LotEntry[] {
  const { type, runs, plans, devicesByRun, readingsByRun } = data;
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
  for (const rl of data.runLots) {
    const list = runIdsByLot.get(rl.lotId);
    if (list) list.push(rl.runId);
    else runIdsByLot.set(rl.lotId, [rl.runId]);
  }

  const chosen = data.lots.map((lot) => {
    const lotRuns = (runIdsByLot.get(lot.id) ?? [])
      .map((id) => runs.get(id)!)
      .filter(Boolean)
      .sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime());
    const run = lotRuns.find((r) => measuredLotsByRun.get(r.id)?.has(lot.id)) ?? lotRuns.find((r) => r.state !== 'aborted') ?? null;
    return { lot, lotRuns, run };
  });

  // A run's drift covers all its lots' devices: computed once, and dropped after its last lot so
  // the drift views (several kB per device) never pile up for the whole part.
  const lotsLeft = new Map<string, number>();
  for (const c of chosen) if (c.run) lotsLeft.set(c.run.id, (lotsLeft.get(c.run.id) ?? 0) + 1);
  const drift = new Map<string, ReturnType<typeof runDrift>>();
  const driftOf = (run: RunRow) => {
    let d = drift.get(run.id);
    if (!d) {
      const plan = plans.get(run.planId)!;
      // The part being analysed gives the gain reference (as before: the plan's own type was looked
      // up among the analysed types, falling back to the first of them).
      // Lot analytics reads the numbers only: the per-parameter reason texts are not built.
      d = runDrift({ run, plan, deviceType: type, devices: devicesByRun.get(run.id) ?? [] }, readingsByRun.get(run.id) ?? [], { reasons: false });
      drift.set(run.id, d);
    }
    const left = lotsLeft.get(run.id)! - 1;
    lotsLeft.set(run.id, left);
    if (left === 0) drift.delete(run.id);
    return d;
  };

  const gain = { referenceC: type.betaRefTC, xtb: type.xtb };
  return chosen.map(({ lot, lotRuns, run }) => {
    const plan = run ? plans.get(run.planId)! : null;
    const { devices: _views, ...figures } = lotCore({
      lot: { id: lot.id, code: lot.code, deviceTypeId: lot.deviceTypeId, partNumber: type.partNumber, dateCode: lot.dateCode },
      run: run ? { id: run.id, code: run.code, state: run.state, stressHours: run.stressHours } : null,
      plan: plan
        ? {
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
          }
        : null,
      devices: run ? driftOf(run).devices.filter((d) => d.lotId === lot.id) : [],
    });
    return { figures, runId: run?.id ?? null, otherRunIds: lotRuns.filter((r) => r.id !== run?.id).map((r) => r.id), gain };
  });
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

  private async read(sel: { typeIds?: string[] } | { lotId: string }, ordered: boolean): Promise<{ parts: PartAnalysis[]; order: string[] }> {
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
          ? (await m.query(`SELECT id FROM lots WHERE device_type_id = ANY($1::uuid[]) ORDER BY code ASC`, [parts.map((p) => p.deviceTypeId)])).map(
              (r: { id: string }) => r.id,
            )
          : [];
      return { parts, order };
    });
  }

  private async part(m: EntityManager, typeId: string, version: PartVersion): Promise<PartAnalysis | null> {
    const hit = this.entries.get(typeId);
    if (hit && hit.version.figures === version.figures) {
      const part = hit.version.runs === version.runs ? hit : hit.withRuns(await m.query(`SELECT ${RUN_STATUS_COLUMNS} FROM runs WHERE id = ANY($1::uuid[])`, [hit.runIds]), version);
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
