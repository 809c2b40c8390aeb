/**
 * One ingest batch, one transaction: telemetry messages with their sockets as arrays (one row per
 * message, de-duplicated on (rig_id, seq); migration 1828…), the cycle reports of the newly
 * inserted messages only (COPY), the per-minute rollups the ingest
 * held back (rollups.ts), the rigs' live columns, rejected messages and the durable counters.
 * Nothing here talks MQTT or emits events: the caller does that after COMMIT with what this returns.
 *
 * Round trips, in order: BEGIN + rig lookup, messages, (stored copies of duplicates), (COPY cycles),
 * (rollups), (rig rows), (rejections), counters, COMMIT — each step is one function below.
 */
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Pool, PoolClient } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
// From the modules themselves, not shared/mqtt's index: its re-exports compile to one shared keyed
// getter, which V8 does not inline (it was ~4 % of the ingest's CPU in the per-socket loops).
import { type RigStatus, type Telemetry } from '../../../shared/mqtt/payloads';
import { RIG_CODE_PATTERN } from '../../../shared/mqtt/topics';
import type { RigStatusChanged, TelemetryLanded } from './contracts';
import { upsertRollups, type RollupRow } from './rollups';

export type IngestItem =
  | { kind: 'telemetry'; rigCode: string; msg: Telemetry; receivedAt: Date }
  | { kind: 'status'; rigCode: string; status: RigStatus; receivedAt: Date }
  | { kind: 'reject'; topic: string; rigCode: string | null; reason: string; excerpt: string; receivedAt: Date };

export interface BatchResult {
  /** Every telemetry seq of a known rig in this batch (new and duplicate), for `stored`. */
  storedByRig: Map<string, number[]>;
  landed: TelemetryLanded[];
  statusChanges: RigStatusChanged[];
  newMessages: number;
  duplicates: number;
  sampleRows: number;
  rejected: number;
}

export interface BatchExtras {
  /** Counter deltas to add in the same transaction (e.g. ingest_dropped, rejections not kept). */
  counters?: Record<string, number>;
  /**
   * Rollup rows the ingest's accumulator hands over (none most of the time); with rows the write
   * also moves the recovery watermark (rollups.ts). A batch's own rollups are folded by the caller
   * after COMMIT (RollupAccumulator.add(result.landed)) and go out with a later write.
   */
  rollups?: RollupRow[];
}

/** Counter names in system_counters. */
export const COUNTERS = {
  messages: 'ingest_messages',
  samples: 'ingest_samples',
  duplicates: 'ingest_duplicates',
  rejected: 'ingest_rejected',
  dropped: 'ingest_dropped',
  batches: 'ingest_batches',
  seqConflicts: 'ingest_seq_conflicts',
  statusMessages: 'ingest_status_messages',
} as const;

interface RigRow {
  id: string;
  code: string;
  online: boolean;
  active: boolean;
  socket_count: number;
  humidity_capable: boolean;
}

/**
 * Why a rig's registration refuses this telemetry, or null. Read from the rig's row in the batch's
 * own transaction, so a deactivation applies to the very next batch. O(sockets), no allocation
 * unless refused: the hot path.
 */
export function registrationProblem(
  rig: Pick<RigRow, 'code' | 'active' | 'socket_count' | 'humidity_capable'>,
  msg: Telemetry,
): string | null {
  if (!rig.active) return `rig ${rig.code} is deactivated; its telemetry is not stored`;
  if (msg.humidityPct !== null && !rig.humidity_capable) {
    return `humidity ${msg.humidityPct} % from rig ${rig.code}, which is registered without humidity control`;
  }
  const socket = msg.socket;
  const count = rig.socket_count;
  for (let k = 0; k < socket.length; k++) {
    if (socket[k] >= count)
      return `socket ${socket[k]} does not exist on rig ${rig.code} (registered with ${count} sockets, 0–${count - 1})`;
  }
  return null;
}

/** Float text for COPY: JS number formatting (incl. 1e-9) is valid PostgreSQL input. */
const f = (n: number) => String(n);

/** A number array as PostgreSQL array text (`{1,2.5,-3}`); JS number text is valid real/float8 input. */
export function arrayText(a: ArrayLike<number>): string {
  let s = '{';
  for (let k = 0; k < a.length; k++) s += k ? `,${a[k]}` : `${a[k]}`;
  return `${s}}`;
}

/** Power-cycling reports of the new messages that carry them (cycling rigs only; shared/mqtt/payloads.ts). */
export function cycleCopyText(rows: Array<{ rigId: string; msg: Telemetry }>): string {
  const nul = (x: number | null) => (x === null ? '\\N' : f(x));
  let s = '';
  for (const { rigId, msg } of rows) {
    const { socket, cycles, dTjLowC, dTjHighC } = msg;
    if (!cycles || !dTjLowC || !dTjHighC) continue;
    for (let k = 0; k < socket.length; k++) {
      s += `${rigId}\t${msg.seq}\t${socket[k]}\t${cycles[k]}\t${nul(dTjLowC[k])}\t${nul(dTjHighC[k])}\n`;
    }
  }
  return s;
}

async function copyCycles(client: PoolClient, rows: Array<{ rigId: string; msg: Telemetry }>): Promise<void> {
  const text = cycleCopyText(rows);
  if (!text) return;
  const stream = client.query(copyFrom('COPY telemetry_cycles (rig_id, seq, socket, cycles, d_tj_low_c, d_tj_high_c) FROM STDIN'));
  await pipeline(Readable.from([Buffer.from(text, 'latin1')]), stream);
}

async function addCounters(client: PoolClient, deltas: Record<string, number>): Promise<void> {
  // Sorted: a fixed lock order for transactions in flight together.
  const entries = Object.entries(deltas)
    .filter(([, v]) => v > 0)
    .sort((x, y) => (x[0] < y[0] ? -1 : 1));
  if (!entries.length) return;
  await client.query(
    `INSERT INTO system_counters AS c (name, value, updated_at)
     SELECT name, value, now() FROM unnest($1::varchar[], $2::bigint[]) AS t(name, value)
     ON CONFLICT (name) DO UPDATE SET value = c.value + EXCLUDED.value, updated_at = now()`,
    [entries.map((e) => e[0]), entries.map((e) => e[1])],
  );
}

/** Write one batch in one transaction. Throws (after ROLLBACK) when the database fails. */
export async function writeBatch(pool: Pool, items: IngestItem[], extras: BatchExtras = {}): Promise<BatchResult> {
  const client = await pool.connect();
  let broken: Error | undefined;
  // A checked-out pg client has no 'error' listener (pg-pool removes its idle one): a server
  // that goes away between two statements would otherwise crash the process.
  const onError = (err: Error) => {
    broken = err;
  };
  client.on('error', onError);
  try {
    // The rigs drop a sample once told `stored` (after COMMIT), so the COMMIT must be durable even
    // on a server configured with synchronous_commit=off (an immediate stop or crash would otherwise
    // lose a transaction already confirmed to the rig).
    const rigs = await beginAndFindRigs(client, items);
    const result = await writeInTransaction(client, items, extras, rigs);
    await client.query('COMMIT');
    return result;
  } catch (err) {
    broken = err as Error;
    await client.query('ROLLBACK').catch(() => undefined);
    throw err;
  } finally {
    client.off('error', onError);
    // A client whose connection failed must not go back to the pool.
    client.release(broken && isConnectionError(broken) ? broken : undefined);
  }
}

export function isConnectionError(err: Error): boolean {
  const code = (err as { code?: string }).code ?? '';
  // Class 08 (connection exception), 57P (operator intervention: shutdown), 53 (resources), 3D000 (db gone).
  return /^(08|57P|53|3D000)/.test(code) || /Connection terminated|ECONNREFUSED|ECONNRESET|not queryable/i.test(err.message);
}

const RIGS_BY_CODE = 'SELECT id, code, online, active, socket_count, humidity_capable FROM rigs WHERE code = ANY';

/**
 * BEGIN and the batch's rigs in one round trip. Each round trip of an ingest transaction waits for
 * this process's event loop (busy with parsing and protection), and PostgreSQL idles meanwhile. The
 * rig codes come from topics (RIG_CODE_PATTERN: A–Z, 0–9, '-'), so they are written into the
 * statement as an array literal; should one not match, the lookup is a parameterised query of its own.
 */
async function beginAndFindRigs(client: PoolClient, items: IngestItem[]): Promise<Map<string, RigRow>> {
  const codes = new Set<string>();
  for (const it of items) if (it.kind !== 'reject') codes.add(it.rigCode);
  const begin = 'BEGIN; SET LOCAL synchronous_commit = on';
  const rigs = new Map<string, RigRow>();
  let rows: RigRow[] = [];
  if (!codes.size) {
    await client.query(begin);
  } else if ([...codes].every((c) => RIG_CODE_PATTERN.test(c))) {
    // Each element double-quoted: an unquoted NULL would be read as a null element.
    const literal = [...codes].map((c) => `"${c}"`).join(',');
    const results = (await client.query(`${begin}; ${RIGS_BY_CODE}('{${literal}}'::varchar[])`)) as unknown as Array<{ rows: RigRow[] }>;
    rows = results[results.length - 1].rows;
  } else {
    await client.query(begin);
    rows = (await client.query<RigRow>(`${RIGS_BY_CODE}($1::varchar[])`, [Array.from(codes)])).rows;
  }
  for (const r of rows) rigs.set(r.code, r);
  return rigs;
}

interface Rejection {
  topic: string;
  rigCode: string | null;
  reason: string;
  excerpt: string;
  at: Date;
}

interface TelemetryIn {
  rig: RigRow;
  msg: Telemetry;
  receivedAt: Date;
}

/** Per rig, in arrival order: final online flag, newest message, last seen. */
interface RigBatchState {
  rig: RigRow;
  online: boolean | null;
  latest: Telemetry | null;
  seen: Date | null;
  lastAt: Date;
}

/** A batch's items by what becomes of them (no I/O). */
interface SortedItems {
  rejects: Rejection[];
  telemetry: TelemetryIn[];
  rigState: Map<string, RigBatchState>;
  statusMessages: number;
}

interface FreshMessage {
  rigId: string;
  rigCode: string;
  msg: Telemetry;
}

interface DuplicateMessage {
  rig: RigRow;
  msg: Telemetry;
  at: Date;
}

async function writeInTransaction(
  client: PoolClient,
  items: IngestItem[],
  extras: BatchExtras,
  rigs: Map<string, RigRow>,
): Promise<BatchResult> {
  const sorted = sortItems(items, rigs);
  const { telemetry, rejects } = sorted;
  // 1. Messages with their sockets (one row each), de-duplicated on (rig_id, seq).
  const isNew = await insertMessages(client, telemetry);
  const { fresh, dups } = splitFresh(telemetry, isNew);
  // 2. Duplicates whose content differs from the stored copy (appended to the rejections).
  const seqConflicts = dups.length ? await recordSeqConflicts(client, dups, rejects) : 0;
  // 3. Cycle reports of the new messages only, then the rollups the ingest hands over.
  let sampleRows = 0;
  for (const r of fresh) sampleRows += r.msg.socket.length;
  if (fresh.length) await copyCycles(client, fresh);
  const rollups = extras.rollups ?? [];
  if (rollups.length) await upsertRollups(client, rollups);
  // 4. Rigs' live columns. Sorted by id: a fixed lock order for transactions in flight together.
  const states = Array.from(sorted.rigState.values()).sort((x, y) => (x.rig.id < y.rig.id ? -1 : x.rig.id > y.rig.id ? 1 : 0));
  if (states.length) await updateRigRows(client, states);
  // 5. Rejections, with the reason and an excerpt.
  if (rejects.length) await insertRejections(client, rejects);
  // 6. Durable counters.
  await addCounters(
    client,
    batchCounters(
      extras.counters,
      items.length,
      fresh.length,
      sampleRows,
      dups.length,
      rejects.length,
      seqConflicts,
      sorted.statusMessages,
    ),
  );
  return batchResult(telemetry, fresh, dups.length, states, sampleRows, rejects.length);
}

/** Rejections, telemetry of known rigs and each rig's final state, in arrival order. */
function sortItems(items: IngestItem[], rigs: Map<string, RigRow>): SortedItems {
  const rejects: Rejection[] = [];
  const telemetry: TelemetryIn[] = [];
  const rigState = new Map<string, RigBatchState>();
  const stateOf = (rig: RigRow) => {
    let s = rigState.get(rig.id);
    if (!s) rigState.set(rig.id, (s = { rig, online: null, latest: null, seen: null, lastAt: new Date(0) }));
    return s;
  };
  let statusMessages = 0;

  for (const it of items) {
    if (it.kind === 'reject') {
      rejects.push({ topic: it.topic, rigCode: it.rigCode, reason: it.reason, excerpt: it.excerpt, at: it.receivedAt });
      continue;
    }
    const rig = rigs.get(it.rigCode);
    if (!rig) {
      const topic = `emberlot/v1/rigs/${it.rigCode}/${it.kind}`;
      const body = it.kind === 'telemetry' ? `seq ${it.msg.seq}, ${it.msg.socket.length} sockets` : `online ${it.status.online}`;
      rejects.push({
        topic,
        rigCode: it.rigCode,
        reason: `unknown rig code ${it.rigCode} (not registered)`,
        excerpt: body,
        at: it.receivedAt,
      });
      continue;
    }
    if (it.kind === 'telemetry') {
      const problem = registrationProblem(rig, it.msg);
      if (problem) {
        const excerpt = `seq ${it.msg.seq}, ts ${it.msg.ts}, ${it.msg.socket.length} sockets, humidity ${it.msg.humidityPct ?? 'none'}`;
        rejects.push({
          topic: `emberlot/v1/rigs/${rig.code}/telemetry`,
          rigCode: rig.code,
          reason: `telemetry: ${problem}`,
          excerpt,
          at: it.receivedAt,
        });
        continue;
      }
    } else if (!rig.active && it.status.online) {
      // A deactivated rig is not marked online (its last will, online:false, still lands).
      rejects.push({
        topic: `emberlot/v1/rigs/${rig.code}/status`,
        rigCode: rig.code,
        reason: `status: rig ${rig.code} is deactivated`,
        excerpt: `online ${it.status.online}`,
        at: it.receivedAt,
      });
      continue;
    }
    const s = stateOf(rig);
    if (it.receivedAt > s.lastAt) s.lastAt = it.receivedAt;
    if (it.kind === 'telemetry') {
      telemetry.push({ rig, msg: it.msg, receivedAt: it.receivedAt });
      s.online = true;
      if (!s.latest || it.msg.seq > s.latest.seq) s.latest = it.msg;
      if (!s.seen || it.receivedAt > s.seen) s.seen = it.receivedAt;
    } else {
      statusMessages++;
      s.online = it.status.online;
      if (it.status.online && (!s.seen || it.receivedAt > s.seen)) s.seen = it.receivedAt;
    }
  }
  return { rejects, telemetry, rigState, statusMessages };
}

/**
 * Insert each message once, with its sockets as arrays; returns `${rig_id}|${seq}` of those that were
 * new. The table's key is (rig_id, seq, ts) (partitioned by ts), so a (rig_id, seq) already stored
 * with another ts is refused here (NOT EXISTS over every partition's key index) and becomes a seq
 * conflict; within the batch only the first copy of a (rig_id, seq) is sent. A copy in flight in the
 * other transaction with the same ts waits on the key (ON CONFLICT); with another ts it would be
 * stored twice — a rig that reuses a seq within a second, which the seq-conflict check exists for.
 */
async function insertMessages(client: PoolClient, telemetry: TelemetryIn[]): Promise<Set<string>> {
  const isNew = new Set<string>();
  if (!telemetry.length) return isNew;
  const first: TelemetryIn[] = [];
  const seen = new Set<string>();
  for (const t of telemetry) {
    const key = `${t.rig.id}|${t.msg.seq}`;
    if (seen.has(key)) continue;
    seen.add(key);
    first.push(t);
  }
  const { rows } = await client.query<{ rig_id: string; seq: string }>(
    `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c, socket, case_c, v_v, i_a, flags)
     SELECT v.rig_id, v.seq, v.ts, v.clock, v.chamber, v.humidity, v.setpoint, v.socket::smallint[], v.case_c::real[], v.v_v::real[], v.i_a::float8[], v.flags::smallint[]
     FROM unnest($1::uuid[], $2::bigint[], $3::timestamptz[], $4::float8[], $5::real[], $6::real[], $7::real[], $8::text[], $9::text[], $10::text[], $11::text[], $12::text[])
       AS v(rig_id, seq, ts, clock, chamber, humidity, setpoint, socket, case_c, v_v, i_a, flags)
     WHERE NOT EXISTS (SELECT 1 FROM telemetry_batches b WHERE b.rig_id = v.rig_id AND b.seq = v.seq)
     ON CONFLICT DO NOTHING
     RETURNING rig_id, seq`,
    [
      first.map((t) => t.rig.id),
      first.map((t) => t.msg.seq),
      first.map((t) => t.msg.ts),
      first.map((t) => t.msg.stressClockS),
      first.map((t) => t.msg.chamberC),
      first.map((t) => t.msg.humidityPct),
      first.map((t) => t.msg.setpointC),
      first.map((t) => arrayText(t.msg.socket)),
      first.map((t) => arrayText(t.msg.caseC)),
      first.map((t) => arrayText(t.msg.vV)),
      first.map((t) => arrayText(t.msg.iA)),
      first.map((t) => arrayText(t.msg.flags)),
    ],
  );
  for (const r of rows) isNew.add(`${r.rig_id}|${r.seq}`);
  return isNew;
}

/** New messages (the first copy of each inserted header) and duplicates (everything else). */
function splitFresh(telemetry: TelemetryIn[], isNew: Set<string>): { fresh: FreshMessage[]; dups: DuplicateMessage[] } {
  const fresh: FreshMessage[] = [];
  const dups: DuplicateMessage[] = [];
  const seenInBatch = new Set<string>();
  for (const t of telemetry) {
    const key = `${t.rig.id}|${t.msg.seq}`;
    if (isNew.has(key) && !seenInBatch.has(key)) fresh.push({ rigId: t.rig.id, rigCode: t.rig.code, msg: t.msg });
    else dups.push({ rig: t.rig, msg: t.msg, at: t.receivedAt });
    seenInBatch.add(key);
  }
  return { fresh, dups };
}

/**
 * A duplicate seq whose content differs from what is stored means the rig reused its counter
 * (e.g. it lost its seq after a restart): keep the first, record the conflict for an admin.
 * Returns how many; each becomes a rejection.
 */
async function recordSeqConflicts(client: PoolClient, dups: DuplicateMessage[], rejects: Rejection[]): Promise<number> {
  const { rows } = await client.query<{ rig_id: string; seq: string; ts: Date; stress_clock_s: number }>(
    `SELECT b.rig_id, b.seq, b.ts, b.stress_clock_s FROM telemetry_batches b
     JOIN unnest($1::uuid[], $2::bigint[]) AS d(rig_id, seq) ON b.rig_id = d.rig_id AND b.seq = d.seq`,
    [dups.map((d) => d.rig.id), dups.map((d) => d.msg.seq)],
  );
  const stored = new Map(rows.map((r) => [`${r.rig_id}|${r.seq}`, r]));
  let seqConflicts = 0;
  for (const d of dups) {
    const s = stored.get(`${d.rig.id}|${d.msg.seq}`);
    if (s && (s.ts.getTime() !== Date.parse(d.msg.ts) || s.stress_clock_s !== d.msg.stressClockS)) {
      seqConflicts++;
      rejects.push({
        topic: `emberlot/v1/rigs/${d.rig.code}/telemetry`,
        rigCode: d.rig.code,
        reason: `seq ${d.msg.seq} was already stored with different content (the rig reused its sequence numbers); the first copy is kept`,
        excerpt: `stored ts ${s.ts.toISOString()}, received ts ${d.msg.ts}`,
        at: d.at,
      });
    }
  }
  return seqConflicts;
}

/** The rigs' live columns; the newest values only when the message is at least as new as last_seq. */
async function updateRigRows(client: PoolClient, states: RigBatchState[]): Promise<void> {
  await client.query(
    `UPDATE rigs r SET
       last_seq = GREATEST(r.last_seq, COALESCE(v.seq, 0)),
       chamber_c = CASE WHEN v.seq IS NOT NULL AND v.seq >= r.last_seq THEN v.chamber ELSE r.chamber_c END,
       setpoint_c = CASE WHEN v.seq IS NOT NULL AND v.seq >= r.last_seq THEN v.setpoint ELSE r.setpoint_c END,
       humidity_pct = CASE WHEN v.seq IS NOT NULL AND v.seq >= r.last_seq THEN v.humidity ELSE r.humidity_pct END,
       last_seen_at = GREATEST(r.last_seen_at, v.seen),
       online = COALESCE(v.online, r.online)
     FROM unnest($1::uuid[], $2::bigint[], $3::float8[], $4::float8[], $5::float8[], $6::timestamptz[], $7::boolean[])
       AS v(id, seq, chamber, setpoint, humidity, seen, online)
     WHERE r.id = v.id`,
    [
      states.map((s) => s.rig.id),
      states.map((s) => s.latest?.seq ?? null),
      states.map((s) => s.latest?.chamberC ?? null),
      states.map((s) => s.latest?.setpointC ?? null),
      states.map((s) => s.latest?.humidityPct ?? null),
      states.map((s) => s.seen),
      states.map((s) => s.online),
    ],
  );
}

async function insertRejections(client: PoolClient, rejects: Rejection[]): Promise<void> {
  await client.query(
    `INSERT INTO rejected_messages (at, topic, rig_code, reason, excerpt)
     SELECT * FROM unnest($1::timestamptz[], $2::varchar[], $3::varchar[], $4::text[], $5::text[])`,
    [
      rejects.map((r) => r.at),
      rejects.map((r) => r.topic.slice(0, 200)),
      rejects.map((r) => r.rigCode?.slice(0, 32) ?? null),
      rejects.map((r) => r.reason),
      rejects.map((r) => r.excerpt),
    ],
  );
}

/** The counter deltas of one batch, on top of the caller's (turned-away messages and such). */
function batchCounters(
  extra: Record<string, number> | undefined,
  items: number,
  messages: number,
  sampleRows: number,
  duplicates: number,
  rejected: number,
  seqConflicts: number,
  statusMessages: number,
): Record<string, number> {
  const counters: Record<string, number> = { ...(extra ?? {}) };
  const bump = (name: string, n: number) => (counters[name] = (counters[name] ?? 0) + n);
  bump(COUNTERS.messages, messages);
  bump(COUNTERS.samples, sampleRows);
  bump(COUNTERS.duplicates, duplicates);
  bump(COUNTERS.rejected, rejected - seqConflicts);
  bump(COUNTERS.seqConflicts, seqConflicts);
  bump(COUNTERS.statusMessages, statusMessages);
  if (items) bump(COUNTERS.batches, 1);
  return counters;
}

/** What the caller confirms and announces after COMMIT. */
function batchResult(
  telemetry: TelemetryIn[],
  fresh: FreshMessage[],
  duplicates: number,
  states: RigBatchState[],
  sampleRows: number,
  rejected: number,
): BatchResult {
  const storedByRig = new Map<string, number[]>();
  for (const t of telemetry) {
    let list = storedByRig.get(t.rig.code);
    if (!list) storedByRig.set(t.rig.code, (list = []));
    list.push(t.msg.seq);
  }
  fresh.sort((a, b) => (a.rigId < b.rigId ? -1 : a.rigId > b.rigId ? 1 : a.msg.seq - b.msg.seq));
  const landed: TelemetryLanded[] = fresh.map(({ rigId, rigCode, msg }) => ({
    rigId,
    rigCode,
    seq: msg.seq,
    ts: new Date(msg.ts),
    stressClockS: msg.stressClockS,
    chamberC: msg.chamberC,
    humidityPct: msg.humidityPct,
    setpointC: msg.setpointC,
    socket: msg.socket,
    caseC: msg.caseC,
    vV: msg.vV,
    iA: msg.iA,
    flags: msg.flags,
  }));
  const statusChanges: RigStatusChanged[] = [];
  for (const s of states) {
    if (s.online !== null && s.online !== s.rig.online) {
      statusChanges.push({ rigId: s.rig.id, rigCode: s.rig.code, online: s.online, at: s.lastAt });
    }
  }
  return { storedByRig, landed, statusChanges, newMessages: fresh.length, duplicates, sampleRows, rejected };
}
