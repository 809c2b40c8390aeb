/**
 * MQTT payload contracts (JSON, UTF-8). Every message carries its version `v`: 1 for all of them,
 * and telemetry may also come as version 2, the column form (the same content, one array per
 * quantity instead of one object per socket). Receivers must validate with these schemas and drop
 * (and count) what fails; a payload's `rig` must also equal the rig code in its topic — the broker
 * guarantees the topic, not the body.
 */
import { z } from 'zod';
import { storableText } from '../storable-text';
import { RIG_CODE_PATTERN } from './topics';

/** Broker-side cap on one MQTT packet; 256 sockets of telemetry are ~30 KiB, so this is generous. */
export const MAX_PACKET_BYTES = 256 * 1024;
/** Sockets on one rig board (socket index 0…255). */
export const MAX_SOCKETS = 256;
/** Plausibility limits. Absolute zero below; above 500 °C no burn-in hardware survives. */
export const TEMP_MIN_C = -273.15;
export const TEMP_MAX_C = 500;
/** Magnitudes a burn-in bias supply can reach. */
export const VOLTAGE_LIMIT_V = 10_000;
export const CURRENT_LIMIT_A = 1_000;
/** Ranges in one `stored` command. */
export const MAX_STORED_RANGES = 1_000;

/** z.number() in zod 4 already rejects NaN and ±Infinity; bounds make "finite" explicit. */
const tempC = () => z.number().min(TEMP_MIN_C).max(TEMP_MAX_C);
const pct = () => z.number().min(0).max(100);
const volts = () => z.number().min(-VOLTAGE_LIMIT_V).max(VOLTAGE_LIMIT_V);
const amps = () => z.number().min(-CURRENT_LIMIT_A).max(CURRENT_LIMIT_A);
const seqNo = () => z.number().int().min(1).max(Number.MAX_SAFE_INTEGER);
const socketIndex = () =>
  z
    .number()
    .int()
    .min(0)
    .max(MAX_SOCKETS - 1);
const isoTime = () => z.iso.datetime({ offset: true });
/**
 * Free text from a rig (status firmware, an ack's reason): accepted, and made storable here at the
 * parsing edge (NUL and lone surrogates → U+FFFD, shared/storable-text.ts), so no later write of
 * it can fail. A refused trip whose reason carried a NUL once failed the alarm update.
 */
const rigText = (max: number) => z.string().max(max).transform(storableText);

export const rigCodeSchema = z.string().regex(RIG_CODE_PATTERN, 'Rig code must be 2–32 of A–Z, 0–9, "-"');
export const cmdIdSchema = z
  .string()
  .min(1)
  .max(64)
  .regex(/^[A-Za-z0-9._:-]+$/, 'cmdId: letters, digits, . _ : -');

/** A cycle counter: completed power cycles since the rig booted. */
export const MAX_CYCLE_COUNT = 2_147_483_647;
const cycleCount = () => z.number().int().min(0).max(MAX_CYCLE_COUNT);
/** A junction swing, K (null: no cycle completed since the previous message). */
const swingC = () =>
  z
    .number()
    .min(0)
    .max(TEMP_MAX_C - TEMP_MIN_C)
    .nullable();

/** One socket's reading at the sample instant. */
export const socketReadingSchema = z.object({
  /** 0-based socket index on the rig board. */
  i: socketIndex(),
  /** Case (or socket thermocouple) temperature, °C. */
  caseC: tempC(),
  /** Bias voltage, V: VCE under powered bias, the reverse voltage (a magnitude) under reverse bias. */
  vV: volts(),
  /** Collector current under powered bias, leakage current under reverse bias, A. */
  iA: amps(),
  biasOn: z.boolean(),
  tripped: z.boolean(),
  /**
   * Power cycling only (see biasCycleSchema): completed cycles since the rig booted, and the
   * smallest and largest junction swing (K, from the socket's temperature-sensitive parameter) of
   * the cycles completed since the previous message, null when none completed.
   */
  cycles: cycleCount().optional(),
  dTjLowC: swingC().optional(),
  dTjHighC: swingC().optional(),
});
export type SocketReading = z.infer<typeof socketReadingSchema>;

/**
 * rig → server, QoS 1, `emberlot/v1/rigs/{rig}/telemetry`. One message = every socket of the rig
 * at one instant.
 * - `seq`: per-rig, starts at 1, +1 per sample, never reused (survives reconnects); it is the
 *   key of the `stored` acknowledgement and of the server's de-duplication.
 * - `ts`: the rig's own wall-clock time (may jump; do not accrue stress hours from it).
 * - `stressClockS`: the rig's stress clock — monotonic seconds since the rig booted. Real rigs run
 *   it 1:1 with real time; the simulator runs it accelerated (default 3600 s per wall second).
 *   Accrue stress hours from its deltas between consecutive samples; a decrease means a reboot.
 */
/** The fields both telemetry forms share after `v`. */
const telemetryHeader = {
  rig: rigCodeSchema,
  seq: seqNo(),
  ts: isoTime(),
  stressClockS: z.number().min(0).max(1e12),
  chamberC: tempC(),
  humidityPct: pct().nullable(),
  setpointC: tempC(),
};

export const telemetrySchema = z
  .object({
    v: z.literal(1),
    ...telemetryHeader,
    sockets: z.array(socketReadingSchema).min(1).max(MAX_SOCKETS),
  })
  .superRefine((t, ctx) => {
    const seen = new Set<number>();
    const cycling = t.sockets[0]?.cycles !== undefined;
    t.sockets.forEach((s, k) => {
      if (seen.has(s.i)) {
        ctx.addIssue({ code: 'custom', path: ['sockets', k, 'i'], message: `socket index ${s.i} appears twice` });
      }
      seen.add(s.i);
      if ((s.cycles !== undefined) !== cycling) {
        ctx.addIssue({ code: 'custom', path: ['sockets', k, 'cycles'], message: 'cycles must be given for every socket or for none' });
      }
      if (s.cycles === undefined && (s.dTjLowC !== undefined || s.dTjHighC !== undefined)) {
        ctx.addIssue({ code: 'custom', path: ['sockets', k, 'dTjLowC'], message: 'a junction swing needs the cycle count' });
      }
      const swingProblem = swingPairProblem(s.dTjLowC ?? null, s.dTjHighC ?? null);
      if (swingProblem) ctx.addIssue({ code: 'custom', path: ['sockets', k, 'dTjLowC'], message: swingProblem });
    });
  });

/** Why a (smallest, largest) junction-swing pair is inconsistent, or null. */
function swingPairProblem(low: number | null, high: number | null): string | null {
  if ((low === null) !== (high === null)) return 'dTjLowC and dTjHighC are both null or both numbers';
  if (low !== null && high !== null && low > high) return `dTjLowC ${low} is above dTjHighC ${high}`;
  return null;
}
export type TelemetryObjects = z.infer<typeof telemetrySchema>;

/** `flags` bits of the column form. */
export const FLAG_BIAS_ON = 1;
export const FLAG_TRIPPED = 2;

/**
 * rig → server, the same topic and QoS as version 1: telemetry in column form. The header fields
 * are version 1's; the sockets are five arrays of equal length, element k of each describing the
 * same socket: `socket` (index), `caseC`, `vV`, `iA` (as version 1's fields) and `flags`
 * (FLAG_BIAS_ON | FLAG_TRIPPED, 0…3). A 64-socket message is ~1.9 KB instead of ~5 KB, and a
 * receiver parses a handful of arrays instead of 64 objects — at a lab's message rates that was
 * the largest single cost of receiving telemetry. Receivers keep it as it is and turn version 1
 * into it (`telemetryFromReadings`); everything after parsing sees one form (`Telemetry`).
 */
export const telemetryColumnsSchema = z
  .object({
    v: z.literal(2),
    ...telemetryHeader,
    socket: z.array(socketIndex()).min(1).max(MAX_SOCKETS),
    caseC: z.array(tempC()).max(MAX_SOCKETS),
    vV: z.array(volts()).max(MAX_SOCKETS),
    iA: z.array(amps()).max(MAX_SOCKETS),
    flags: z
      .array(
        z
          .number()
          .int()
          .min(0)
          .max(FLAG_BIAS_ON | FLAG_TRIPPED),
      )
      .max(MAX_SOCKETS),
    /** Power cycling only, all three or none: as version 1's per-socket fields. */
    cycles: z.array(cycleCount()).max(MAX_SOCKETS).optional(),
    dTjLowC: z.array(swingC()).max(MAX_SOCKETS).optional(),
    dTjHighC: z.array(swingC()).max(MAX_SOCKETS).optional(),
  })
  .superRefine((t, ctx) => {
    const n = t.socket.length;
    for (const key of ['caseC', 'vV', 'iA', 'flags'] as const) {
      if (t[key].length !== n) ctx.addIssue({ code: 'custom', path: [key], message: `${t[key].length} values for ${n} sockets` });
    }
    const cycleKeys = (['cycles', 'dTjLowC', 'dTjHighC'] as const).filter((key) => t[key] !== undefined);
    if (cycleKeys.length !== 0 && cycleKeys.length !== 3) {
      const missing = (['cycles', 'dTjLowC', 'dTjHighC'] as const).find((key) => t[key] === undefined)!;
      ctx.addIssue({ code: 'custom', path: [missing], message: 'missing: cycles, dTjLowC and dTjHighC come together' });
    }
    for (const key of cycleKeys) {
      const a = t[key]!;
      if (a.length !== n) ctx.addIssue({ code: 'custom', path: [key], message: `${a.length} values for ${n} sockets` });
    }
    if (t.dTjLowC && t.dTjHighC) {
      for (let k = 0; k < n; k++) {
        const problem = swingPairProblem(t.dTjLowC[k] ?? null, t.dTjHighC[k] ?? null);
        if (problem) ctx.addIssue({ code: 'custom', path: ['dTjLowC', k], message: problem });
      }
    }
    const seen = new Set<number>();
    t.socket.forEach((i, k) => {
      if (seen.has(i)) ctx.addIssue({ code: 'custom', path: ['socket', k], message: `socket index ${i} appears twice` });
      seen.add(i);
    });
  });
export type TelemetryColumns = z.infer<typeof telemetryColumnsSchema>;

/**
 * Telemetry as receivers handle it, from either form: the column form's fields (`v` tells which
 * form it came in). Column form arrives as parsed, not copied: a message stays a handful of arrays
 * (numbers unboxed) from receipt through COPY, rollups and live protection, where 64 objects per
 * message (and a box per number field) were most of the receiver's garbage.
 */
export type Telemetry = Omit<TelemetryColumns, 'v'> & { v: 1 | 2 };

/** The per-socket columns of a telemetry message (element k of each = one socket). */
export type TelemetrySocketColumns = Pick<TelemetryColumns, 'socket' | 'caseC' | 'vV' | 'iA' | 'flags' | 'cycles' | 'dTjLowC' | 'dTjHighC'>;

/** Telemetry with one object per socket (version 1's shape, `v` 1 or 2): what a rig builds. */
export type TelemetryReadings = Omit<TelemetryObjects, 'v'> & { v: 1 | 2 };

/** One socket's flags from version 1's booleans. */
export const socketFlags = (biasOn: boolean, tripped: boolean): number => (biasOn ? FLAG_BIAS_ON : 0) | (tripped ? FLAG_TRIPPED : 0);

/** Per-socket objects → columns (version 1's sockets; any `v` is kept). */
export function socketColumns(sockets: readonly SocketReading[]): TelemetrySocketColumns {
  const n = sockets.length;
  const socket: number[] = new Array(n);
  const caseC: number[] = new Array(n);
  const vV: number[] = new Array(n);
  const iA: number[] = new Array(n);
  const flags: number[] = new Array(n);
  for (let k = 0; k < n; k++) {
    const s = sockets[k];
    socket[k] = s.i;
    caseC[k] = s.caseC;
    vV[k] = s.vV;
    iA[k] = s.iA;
    flags[k] = socketFlags(s.biasOn, s.tripped);
  }
  if (n === 0 || sockets[0].cycles === undefined) return { socket, caseC, vV, iA, flags };
  return {
    socket,
    caseC,
    vV,
    iA,
    flags,
    cycles: sockets.map((s) => s.cycles ?? 0),
    dTjLowC: sockets.map((s) => s.dTjLowC ?? null),
    dTjHighC: sockets.map((s) => s.dTjHighC ?? null),
  };
}

/** Telemetry with per-socket objects (version 1, or a rig's own) → the one shape receivers handle. */
export function telemetryFromReadings(t: Omit<TelemetryObjects, 'v'> & { v?: 1 | 2 }): Telemetry {
  return {
    v: t.v ?? 1,
    rig: t.rig,
    seq: t.seq,
    ts: t.ts,
    stressClockS: t.stressClockS,
    chamberC: t.chamberC,
    humidityPct: t.humidityPct,
    setpointC: t.setpointC,
    ...socketColumns(t.sockets),
  };
}

/** The columns back as one object per socket (version 1's socket readings). */
export function socketReadings(c: TelemetrySocketColumns): SocketReading[] {
  const n = c.socket.length;
  const out: SocketReading[] = new Array(n);
  const { cycles, dTjLowC, dTjHighC } = c;
  for (let k = 0; k < n; k++) {
    const flags = c.flags[k];
    out[k] = {
      i: c.socket[k],
      caseC: c.caseC[k],
      vV: c.vV[k],
      iA: c.iA[k],
      biasOn: (flags & FLAG_BIAS_ON) !== 0,
      tripped: (flags & FLAG_TRIPPED) !== 0,
      ...(cycles && dTjLowC && dTjHighC ? { cycles: cycles[k], dTjLowC: dTjLowC[k], dTjHighC: dTjHighC[k] } : {}),
    };
  }
  return out;
}

/** Telemetry (per-socket objects or columns) → the column form's JSON text, as a rig publishes it. */
export function telemetryColumnsText(t: Omit<TelemetryObjects, 'v'> | Omit<Telemetry, 'v'>): string {
  const c = 'sockets' in t ? socketColumns(t.sockets) : t;
  const body: TelemetryColumns = {
    v: 2,
    rig: t.rig,
    seq: t.seq,
    ts: t.ts,
    stressClockS: t.stressClockS,
    chamberC: t.chamberC,
    humidityPct: t.humidityPct,
    setpointC: t.setpointC,
    socket: c.socket,
    caseC: c.caseC,
    vV: c.vV,
    iA: c.iA,
    flags: c.flags,
    ...(c.cycles && c.dTjLowC && c.dTjHighC ? { cycles: c.cycles, dTjLowC: c.dTjLowC, dTjHighC: c.dTjHighC } : {}),
  };
  return JSON.stringify(body);
}

/**
 * rig → server, QoS 1, retained, `emberlot/v1/rigs/{rig}/status`. Published `online: true` on
 * every connect; the rig's MQTT last will is the same message with `online: false` (its `ts` and
 * `lastSeq` are those of the moment the rig connected). `lastSeq` 0 = nothing sent yet.
 */
export const statusSchema = z.object({
  v: z.literal(1),
  rig: rigCodeSchema,
  online: z.boolean(),
  ts: isoTime(),
  firmware: rigText(64).optional(),
  lastSeq: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER),
});
export type RigStatus = z.infer<typeof statusSchema>;

/** Inclusive seq range [from, to]. */
export const seqRangeSchema = z
  .tuple([seqNo(), seqNo()])
  .refine(([from, to]) => from <= to, { message: 'range start must not exceed its end' });
export type SeqRange = z.infer<typeof seqRangeSchema>;

const commandBase = { v: z.literal(1), cmdId: cmdIdSchema, ts: isoTime().optional() };

/**
 * A cycling chamber's programme (temperature cycling, JESD22-A104): with a `profile`, the chamber
 * cycles its air between the extremes (aimed into each extreme's band) and holds each until its
 * load has dwelt there `dwellMin`; `setpointC` is then the hot aim. Without it the chamber holds
 * `setpointC`. Chambers only; a burn-in oven refuses it.
 */
export const chamberProfileSchema = z.object({
  lowC: tempC(),
  highC: tempC(),
  dwellMin: z.number().positive().max(1440),
  rampKPerMin: z.number().positive().max(100),
});
export type ChamberProfileCommand = z.infer<typeof chamberProfileSchema>;

export const setpointCommandSchema = z.object({
  ...commandBase,
  type: z.literal('setpoint'),
  setpointC: tempC(),
  humidityPct: pct().nullable().optional(),
  profile: chamberProfileSchema.nullable().optional(),
});

/**
 * Power cycling (intermittent operating life, MIL-STD-750 method 1037): with `on: true`, the
 * sockets' power switches on for `onS` and off for `offS` stress-clock seconds, over and over, and
 * the rig reports each socket's completed cycles and junction swing (telemetry `cycles`,
 * `dTjLowC`, `dTjHighC`). `deltaTjC` is the planned swing a rig with swing control aims at.
 * Unlike the other bias settings it is not kept: a bias-on without `cycle` powers continuously.
 */
export const biasCycleSchema = z.object({
  onS: z.number().positive().max(86_400),
  offS: z.number().positive().max(86_400),
  deltaTjC: z.number().positive().max(TEMP_MAX_C),
});
export type BiasCycle = z.infer<typeof biasCycleSchema>;

/**
 * Bias on/off for some sockets. `vV` = VCE (powered) or reverse voltage (reverse bias);
 * `iA` = forced base drive IB under powered bias, the supply's current limit under reverse bias;
 * `icA` = collector current the rig regulates under powered bias (it servoes the base drive), for
 * plans that set IC rather than IB — never together with `iA`, and refused by a reverse-biased
 * socket. Omitted values keep the socket's current setting.
 */
export const biasCommandSchema = z.object({
  ...commandBase,
  type: z.literal('bias'),
  sockets: z.union([z.literal('all'), z.array(socketIndex()).min(1).max(MAX_SOCKETS)]),
  on: z.boolean(),
  vV: volts().optional(),
  iA: amps().optional(),
  icA: z.number().min(0).max(CURRENT_LIMIT_A).optional(),
  cycle: biasCycleSchema.optional(),
});

/** Remove bias from one socket at once and latch it off until `reset-trip`. */
export const tripCommandSchema = z.object({
  ...commandBase,
  type: z.literal('trip'),
  socket: socketIndex(),
  reason: z.string().min(1).max(200),
});

/** Clear a trip latch. Bias stays off until a `bias` command turns it on again. */
export const resetTripCommandSchema = z.object({
  ...commandBase,
  type: z.literal('reset-trip'),
  socket: socketIndex(),
});

/**
 * The application-level acknowledgement: the server has durably committed every telemetry seq in
 * these inclusive ranges (duplicates it had already stored included). The rig drops exactly those
 * from its outbox and keeps re-sending anything else. Rigs do not ack `stored` on command-acks.
 */
export const storedCommandSchema = z.object({
  ...commandBase,
  type: z.literal('stored'),
  ranges: z.array(seqRangeSchema).min(1).max(MAX_STORED_RANGES),
});

/** server → rig, QoS 1, `emberlot/v1/rigs/{rig}/commands`. `cmdId` makes every command idempotent. */
export const commandSchema = z.discriminatedUnion('type', [
  setpointCommandSchema,
  biasCommandSchema,
  tripCommandSchema,
  resetTripCommandSchema,
  storedCommandSchema,
]);
export type RigCommand = z.infer<typeof commandSchema>;
export type RigCommandType = RigCommand['type'];
export type SetpointCommand = z.infer<typeof setpointCommandSchema>;
export type BiasCommand = z.infer<typeof biasCommandSchema>;
export type TripCommand = z.infer<typeof tripCommandSchema>;
export type ResetTripCommand = z.infer<typeof resetTripCommandSchema>;
export type StoredCommand = z.infer<typeof storedCommandSchema>;

/**
 * rig → server, QoS 1, `emberlot/v1/rigs/{rig}/command-acks`. One per command except `stored`;
 * a repeated cmdId is answered with the first outcome and not applied twice.
 */
export const commandAckSchema = z.object({
  v: z.literal(1),
  rig: rigCodeSchema,
  cmdId: cmdIdSchema,
  ok: z.boolean(),
  error: rigText(500).optional(),
});
export type CommandAck = z.infer<typeof commandAckSchema>;

/** server → broker, `emberlot/v1/internal/revoke`: disconnect every client of this rig now. */
export const revokeSchema = z.object({ v: z.literal(1), rig: rigCodeSchema });
export type RevokeMessage = z.infer<typeof revokeSchema>;

// ---------------------------------------------------------------------------------------------
// Parsing helpers

export type ParseResult<T> = { ok: true; data: T } | { ok: false; reason: string };

declare const TextDecoder: { new (): { decode(input: Uint8Array): string } } | undefined;

let decoder: { decode(input: Uint8Array): string } | undefined;

function toText(input: string | Uint8Array): string {
  if (typeof input === 'string') return input;
  if (typeof TextDecoder !== 'undefined') return (decoder ??= new TextDecoder()).decode(input);
  // Fallback without TextDecoder (old JS engines): ASCII/Latin-1 only, enough for JSON we emit.
  let s = '';
  for (let k = 0; k < input.length; k++) s += String.fromCharCode(input[k]);
  return s;
}

function byteLength(input: string | Uint8Array): number {
  // A UTF-8 string is never shorter in bytes than in UTF-16 units; exact enough for a cap.
  return typeof input === 'string' ? input.length : input.byteLength;
}

/** Readable one-line summary of zod issues: `sockets.3.caseC: Too big: expected number to be <=500`. */
export function describeIssues(error: z.ZodError, max = 5): string {
  const parts = error.issues.slice(0, max).map((issue) => {
    const path = issue.path.map(String).join('.');
    return path ? `${path}: ${issue.message}` : issue.message;
  });
  const more = error.issues.length > max ? ` (+${error.issues.length - max} more)` : '';
  return parts.join('; ') + more;
}

/** Decode + size cap + JSON.parse. Never throws. */
function readJson(input: string | Uint8Array, maxBytes: number): ParseResult<unknown> {
  if (byteLength(input) > maxBytes) return { ok: false, reason: `payload larger than ${maxBytes} bytes` };
  try {
    return { ok: true, data: JSON.parse(toText(input)) };
  } catch {
    return { ok: false, reason: 'payload is not valid JSON' };
  }
}

function validate<S extends z.ZodType>(schema: S, json: unknown): ParseResult<z.infer<S>> {
  const result = schema.safeParse(json);
  if (!result.success) return { ok: false, reason: describeIssues(result.error) };
  return { ok: true, data: result.data };
}

/** Decode + JSON.parse + validate. Never throws. */
export function parsePayload<S extends z.ZodType>(
  schema: S,
  input: string | Uint8Array,
  maxBytes = MAX_PACKET_BYTES,
): ParseResult<z.infer<S>> {
  const json = readJson(input, maxBytes);
  return json.ok ? validate(schema, json.data) : json;
}

// ---------------------------------------------------------------------------------------------
// Telemetry's fast path

const TELEMETRY_KEYS = ['v', 'rig', 'seq', 'ts', 'stressClockS', 'chamberC', 'humidityPct', 'setpointC', 'sockets'] as const;
const SOCKET_KEYS = ['i', 'caseC', 'vV', 'iA', 'biasOn', 'tripped'] as const;
const tsSchema = isoTime();
const inRange = (x: unknown, lo: number, hi: number): boolean => typeof x === 'number' && x >= lo && x <= hi;
const isIndex = (x: unknown, lo: number, hi: number): boolean => inRange(x, lo, hi) && Number.isInteger(x);

/** Exactly these own keys (JSON.parse makes plain objects; `__proto__` in the text becomes an own key). */
function hasExactly(o: unknown, keys: readonly string[]): o is Record<string, unknown> {
  if (typeof o !== 'object' || o === null || Array.isArray(o)) return false;
  let n = 0;
  for (const k in o) {
    if (!Object.prototype.hasOwnProperty.call(o, k)) return false;
    n++;
  }
  if (n !== keys.length) return false;
  for (const k of keys) if (!Object.prototype.hasOwnProperty.call(o, k)) return false;
  return true;
}

/** telemetryHeader's rules and the version, by hand (`ts` is left to the caller: it is the costly one). */
function isPlainHeader(j: Record<string, unknown>, v: 1 | 2): boolean {
  if (j.v !== v || typeof j.rig !== 'string' || !RIG_CODE_PATTERN.test(j.rig)) return false;
  if (!isIndex(j.seq, 1, Number.MAX_SAFE_INTEGER)) return false;
  if (!inRange(j.stressClockS, 0, 1e12) || !inRange(j.chamberC, TEMP_MIN_C, TEMP_MAX_C) || !inRange(j.setpointC, TEMP_MIN_C, TEMP_MAX_C))
    return false;
  return j.humidityPct === null || inRange(j.humidityPct, 0, 100);
}

/** Socket indices seen in the message being checked (one check at a time: JS is single-threaded). */
const seenSockets = new Uint32Array(MAX_SOCKETS);
let seenGeneration = 0;

function nextSeenGeneration(): number {
  if (seenGeneration >= 0xffffffff) {
    seenSockets.fill(0);
    seenGeneration = 0;
  }
  return ++seenGeneration;
}

/**
 * telemetrySchema's rules, checked by hand on parsed JSON that carries exactly the schema's keys —
 * what every rig sends. Zod re-creates every object it accepts (65 per message of 64 sockets), and
 * that and its checks were the largest part of the ingest's CPU; this touches each value once and
 * keeps the parsed object. True only when telemetrySchema accepts `j` and would return a value
 * equal to it; anything else (a bad value, an unknown key) goes through telemetrySchema, which
 * strips unknown keys or gives the reason. tests/broker/mqtt-contracts.test.ts checks the two agree.
 */
export function isPlainTelemetry(j: unknown): j is TelemetryObjects {
  if (!hasExactly(j, TELEMETRY_KEYS) || !isPlainHeader(j, 1)) return false;
  const sockets = j.sockets;
  if (!Array.isArray(sockets) || sockets.length < 1 || sockets.length > MAX_SOCKETS) return false;
  const gen = nextSeenGeneration();
  for (let k = 0; k < sockets.length; k++) {
    const s: unknown = sockets[k];
    if (!hasExactly(s, SOCKET_KEYS)) return false;
    const i = s.i;
    if (!isIndex(i, 0, MAX_SOCKETS - 1)) return false;
    if (seenSockets[i as number] === gen) return false;
    seenSockets[i as number] = gen;
    if (
      !inRange(s.caseC, TEMP_MIN_C, TEMP_MAX_C) ||
      !inRange(s.vV, -VOLTAGE_LIMIT_V, VOLTAGE_LIMIT_V) ||
      !inRange(s.iA, -CURRENT_LIMIT_A, CURRENT_LIMIT_A)
    )
      return false;
    if (typeof s.biasOn !== 'boolean' || typeof s.tripped !== 'boolean') return false;
  }
  // Last: the one check that runs a regular expression of zod's own.
  return typeof j.ts === 'string' && tsSchema.safeParse(j.ts).success;
}

const COLUMN_KEYS = [
  'v',
  'rig',
  'seq',
  'ts',
  'stressClockS',
  'chamberC',
  'humidityPct',
  'setpointC',
  'socket',
  'caseC',
  'vV',
  'iA',
  'flags',
] as const;

/** Version 2's keys with the power-cycling columns. */
const COLUMN_CYCLE_KEYS = [...COLUMN_KEYS, 'cycles', 'dTjLowC', 'dTjHighC'] as const;

/** The cycle columns' rules by hand (cycle counts; swing pairs both null or low ≤ high). */
function isPlainCycleColumns(j: Record<string, unknown>, n: number): boolean {
  const { cycles, dTjLowC: lo, dTjHighC: hi } = j;
  if (!Array.isArray(cycles) || !Array.isArray(lo) || !Array.isArray(hi)) return false;
  if (cycles.length !== n || lo.length !== n || hi.length !== n) return false;
  const maxSwing = TEMP_MAX_C - TEMP_MIN_C;
  for (let k = 0; k < n; k++) {
    if (!isIndex(cycles[k], 0, MAX_CYCLE_COUNT)) return false;
    const a: unknown = lo[k];
    const b: unknown = hi[k];
    if (a === null && b === null) continue;
    if (!inRange(a, 0, maxSwing) || !inRange(b, 0, maxSwing) || (a as number) > (b as number)) return false;
  }
  return true;
}

/** An array of exactly n numbers, each within [lo, hi]. */
function numbersIn(a: unknown, n: number, lo: number, hi: number): boolean {
  if (!Array.isArray(a) || a.length !== n) return false;
  for (let k = 0; k < n; k++) {
    const x: unknown = a[k];
    if (typeof x !== 'number' || !(x >= lo && x <= hi)) return false;
  }
  return true;
}

/**
 * telemetryColumnsSchema's rules by hand, as isPlainTelemetry for version 1: true only when the
 * schema accepts `j` and would return a value equal to it (exactly its keys, every value valid).
 */
export function isPlainTelemetryColumns(j: unknown): j is TelemetryColumns {
  const cycling = hasExactly(j, COLUMN_CYCLE_KEYS);
  if (!cycling && !hasExactly(j, COLUMN_KEYS)) return false;
  if (!isPlainHeader(j, 2)) return false;
  const socket = j.socket;
  if (!Array.isArray(socket) || socket.length < 1 || socket.length > MAX_SOCKETS) return false;
  const n = socket.length;
  if (
    !numbersIn(j.caseC, n, TEMP_MIN_C, TEMP_MAX_C) ||
    !numbersIn(j.vV, n, -VOLTAGE_LIMIT_V, VOLTAGE_LIMIT_V) ||
    !numbersIn(j.iA, n, -CURRENT_LIMIT_A, CURRENT_LIMIT_A)
  )
    return false;
  const flags = j.flags;
  if (!Array.isArray(flags) || flags.length !== n) return false;
  if (cycling && !isPlainCycleColumns(j, n)) return false;
  const gen = nextSeenGeneration();
  for (let k = 0; k < n; k++) {
    const i: unknown = socket[k];
    if (!isIndex(i, 0, MAX_SOCKETS - 1)) return false;
    if (seenSockets[i as number] === gen) return false;
    seenSockets[i as number] = gen;
    if (!isIndex(flags[k], 0, FLAG_BIAS_ON | FLAG_TRIPPED)) return false;
  }
  return typeof j.ts === 'string' && tsSchema.safeParse(j.ts).success;
}

/**
 * Below this magnitude a value is stored as 0. Temperatures, voltages and humidity are stored as
 * 4-byte floats (PostgreSQL `real`), which hold nothing between 0 and ~1.4e-45, and PostgreSQL
 * refuses such input ("out of range for type real") instead of rounding it: one message carrying
 * 1e-50 °C failed its whole batch, and the ingest retried that batch for ever, holding every
 * rig's telemetry. A margin above the smallest float keeps the rounding of text → double →
 * float out of the question; no instrument reads within 1e-44 of zero.
 */
export const REAL_FLUSH_BELOW = 1e-44;

const flushed = (x: number): number => (x !== 0 && x < REAL_FLUSH_BELOW && x > -REAL_FLUSH_BELOW ? 0 : x);

function flushInPlace(a: number[]): void {
  for (let k = 0; k < a.length; k++) {
    const x = a[k];
    if (x !== 0 && x < REAL_FLUSH_BELOW && x > -REAL_FLUSH_BELOW) a[k] = 0;
  }
}

function flushSwings(a: Array<number | null>): void {
  for (let k = 0; k < a.length; k++) {
    const x = a[k];
    if (x !== null && x !== 0 && x < REAL_FLUSH_BELOW) a[k] = 0;
  }
}

/**
 * Valid telemetry with every value its database column can hold: the fields stored as `real`
 * (chamber, set point, humidity, case temperature, voltage) flushed to 0 below REAL_FLUSH_BELOW.
 * In place: the message came from JSON.parse or was just built.
 */
export function withStorableReals(t: Telemetry): Telemetry {
  t.chamberC = flushed(t.chamberC);
  t.setpointC = flushed(t.setpointC);
  if (t.humidityPct !== null) t.humidityPct = flushed(t.humidityPct);
  flushInPlace(t.caseC);
  flushInPlace(t.vV);
  if (t.dTjLowC) flushSwings(t.dTjLowC);
  if (t.dTjHighC) flushSwings(t.dTjHighC);
  return t;
}

/**
 * parsePayload(telemetryColumnsSchema, …) for version 2 and parsePayload(telemetrySchema, …) for
 * version 1 (turned into columns), each with its fast path: the same results for a fraction of
 * the CPU, then withStorableReals. A payload whose `v` is not 2 is judged as version 1.
 */
export function parseTelemetry(input: string | Uint8Array): ParseResult<Telemetry> {
  const json = readJson(input, MAX_PACKET_BYTES);
  if (!json.ok) return json;
  const j = json.data;
  if (typeof j === 'object' && j !== null && (j as { v?: unknown }).v === 2) {
    // Kept as parsed: exactly the schema's keys, every value valid.
    if (isPlainTelemetryColumns(j)) return { ok: true, data: withStorableReals(j) };
    const r = validate(telemetryColumnsSchema, j);
    return r.ok ? { ok: true, data: withStorableReals(r.data) } : r;
  }
  if (isPlainTelemetry(j)) return { ok: true, data: withStorableReals(telemetryFromReadings(j)) };
  const r = validate(telemetrySchema, j);
  return r.ok ? { ok: true, data: withStorableReals(telemetryFromReadings(r.data)) } : r;
}

/**
 * How far a telemetry `ts` may lie from the receiver's clock. Ahead: one day covers clock drift and
 * a rig clock set in local time but sent as UTC (at most 14 h off). Behind: 30 days covers an
 * outbox a rig held through a long outage (rigs re-send until `stored`; a stress run ends or is
 * aborted long before). Outside it the rig's clock is broken (a flat RTC restarts at 1970) and the
 * message is refused with the reason, not stored: its time would misplace it in every chart and
 * rollup. Common practice (plausibility window), values chosen here.
 */
export const TELEMETRY_TS_MAX_AHEAD_MS = 24 * 3600_000;
export const TELEMETRY_TS_MAX_BEHIND_MS = 30 * 24 * 3600_000;

/** Why a telemetry `ts` is outside the window around `receivedMs`, or null. */
export function telemetryTimeProblem(ts: string, receivedMs: number): string | null {
  const at = Date.parse(ts);
  if (at > receivedMs + TELEMETRY_TS_MAX_AHEAD_MS) {
    return `ts ${ts} is more than ${TELEMETRY_TS_MAX_AHEAD_MS / 3600_000} h ahead of the server's clock (${new Date(receivedMs).toISOString()}); check the rig's clock`;
  }
  if (!(at >= receivedMs - TELEMETRY_TS_MAX_BEHIND_MS)) {
    return `ts ${ts} is more than ${TELEMETRY_TS_MAX_BEHIND_MS / 86_400_000} days behind the server's clock (${new Date(receivedMs).toISOString()}); check the rig's clock`;
  }
  return null;
}

export const parseStatus = (input: string | Uint8Array) => parsePayload(statusSchema, input);
export const parseCommand = (input: string | Uint8Array) => parsePayload(commandSchema, input);
export const parseCommandAck = (input: string | Uint8Array) => parsePayload(commandAckSchema, input);
export const parseRevoke = (input: string | Uint8Array) => parsePayload(revokeSchema, input);

// ---------------------------------------------------------------------------------------------
// Seq ranges (for `stored`)

/** Sorted, merged inclusive ranges covering the given seqs: [1,2,3,5] → [[1,3],[5,5]]. */
export function seqsToRanges(seqs: Iterable<number>): SeqRange[] {
  const sorted = Array.from(new Set(seqs)).sort((a, b) => a - b);
  const out: SeqRange[] = [];
  for (const s of sorted) {
    const last = out[out.length - 1];
    if (last && s === last[1] + 1) last[1] = s;
    else out.push([s, s]);
  }
  return out;
}

/** True when seq lies in one of the inclusive ranges. */
export function seqInRanges(seq: number, ranges: readonly SeqRange[]): boolean {
  for (const [from, to] of ranges) if (seq >= from && seq <= to) return true;
  return false;
}

const isRangeList = (x: Iterable<number> | SeqRange[]): x is SeqRange[] => Array.isArray(x) && Array.isArray(x[0]);

/** Build a `stored` command, splitting into several when there are more ranges than one allows. */
export function buildStoredCommands(seqsOrRanges: Iterable<number> | SeqRange[], makeId: () => string): StoredCommand[] {
  const ranges = isRangeList(seqsOrRanges) ? seqsOrRanges : seqsToRanges(seqsOrRanges);
  const out: StoredCommand[] = [];
  for (let k = 0; k < ranges.length; k += MAX_STORED_RANGES) {
    out.push({ v: 1, type: 'stored', cmdId: makeId(), ranges: ranges.slice(k, k + MAX_STORED_RANGES) });
  }
  return out;
}
