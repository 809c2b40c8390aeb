/** Rigs admin API (/api/rigs): registration, MQTT credentials, maintenance windows. */
import { z } from 'zod';
import { RIG_CODE_PATTERN } from '../mqtt/topics';
import { RIG_KINDS, type RigKind } from '../domain/rig-kinds';

const finite = () => z.number().finite();

/** Rig codes are printed in capitals on the oven; lower-case input is accepted and raised. */
export const rigCodeInputSchema = z
  .string()
  .trim()
  .toUpperCase()
  .regex(RIG_CODE_PATTERN, 'Use 2–32 capital letters, digits or "-" (e.g. OV-07)');

export const rigCodeParamSchema = z.object({ code: rigCodeInputSchema });
export const rigMaintenanceParamSchema = z.object({ code: rigCodeInputSchema, id: z.string().uuid('Not a valid id') });

export const MAX_RIG_SOCKETS = 256;
/** A chamber's capacity in devices (load positions, not sockets). */
export const MAX_CHAMBER_DEVICES = 2000;

export const createRigSchema = z
  .object({
    code: rigCodeInputSchema,
    name: z.string().trim().min(1, 'Enter a name').max(80),
    location: z.string().trim().max(80).default(''),
    /** 'board' (burn-in oven with biased sockets) or 'chamber' (unbiased stresses; socketCount is its capacity in devices). */
    kind: z.enum(RIG_KINDS).default('board'),
    socketCount: z
      .number()
      .int('Whole sockets only')
      .min(1, 'At least one socket')
      .max(MAX_CHAMBER_DEVICES, `At most ${MAX_CHAMBER_DEVICES} devices`),
    maxTempC: finite().min(25, 'At least 25 °C').max(500, 'At most 500 °C'),
    /** Chambers only: the coldest set point it holds (°C); null = no cooling. */
    minTempC: finite().min(-100, 'At least −100 °C').max(25, 'At most 25 °C').nullable().default(null),
    maxVoltageV: finite().min(0, 'Must be above 0 V').max(10_000, 'At most 10 kV'),
    humidityCapable: z.boolean().default(false),
    maxHumidityPct: finite().min(1).max(100).nullable().default(null),
    /** Chambers only: the vessel's rated absolute pressure (kPa) for autoclave / HAST; null = not a pressure vessel. */
    maxPressureKPa: finite().min(101, 'At least atmospheric (101 kPa)').max(1000, 'At most 1000 kPa').nullable().default(null),
  })
  .strict()
  .superRefine((r, ctx) => {
    if (r.kind === 'board') {
      if (r.socketCount > MAX_RIG_SOCKETS)
        ctx.addIssue({ code: 'custom', path: ['socketCount'], message: `At most ${MAX_RIG_SOCKETS} sockets` });
      if (!(r.maxVoltageV > 0)) ctx.addIssue({ code: 'custom', path: ['maxVoltageV'], message: 'Must be above 0 V' });
      if (r.minTempC !== null) ctx.addIssue({ code: 'custom', path: ['minTempC'], message: 'Only a chamber has a cold limit' });
      if (r.maxPressureKPa !== null)
        ctx.addIssue({ code: 'custom', path: ['maxPressureKPa'], message: 'Only a chamber is a pressure vessel' });
    }
    if (r.humidityCapable && r.maxHumidityPct === null) {
      ctx.addIssue({ code: 'custom', path: ['maxHumidityPct'], message: 'A humidity chamber needs its maximum relative humidity' });
    }
    if (!r.humidityCapable && r.maxHumidityPct !== null) {
      ctx.addIssue({ code: 'custom', path: ['maxHumidityPct'], message: 'Only a humidity-capable rig has a humidity limit' });
    }
  });
export type CreateRigInput = z.infer<typeof createRigSchema>;

export const updateRigSchema = z
  .object({
    name: z.string().trim().min(1).max(80).optional(),
    location: z.string().trim().max(80).optional(),
    maxTempC: finite().min(25).max(500).optional(),
    maxVoltageV: finite().positive().max(10_000).optional(),
    maxHumidityPct: finite().min(1).max(100).nullable().optional(),
    active: z.boolean().optional(),
  })
  .strict()
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' });
export type UpdateRigInput = z.infer<typeof updateRigSchema>;

export const revokeRigSchema = z.object({
  reason: z.string().trim().min(3, 'Say why the credentials are revoked').max(200),
});
export type RevokeRigInput = z.infer<typeof revokeRigSchema>;

export interface Rig {
  id: string;
  code: string;
  name: string;
  location: string;
  kind: RigKind;
  socketCount: number;
  maxTempC: number;
  minTempC: number | null;
  maxPressureKPa: number | null;
  maxVoltageV: number;
  humidityCapable: boolean;
  maxHumidityPct: number | null;
  active: boolean;
  mqttUsername: string;
  credentialsIssuedAt: string;
  credentialsRevokedAt: string | null;
  online: boolean;
  lastSeenAt: string | null;
  lastSeq: number;
  chamberC: number | null;
  setpointC: number | null;
  humidityPct: number | null;
  /** The start permit's dates (null = never recorded); interlockDueAt = last test + INTERLOCK_TEST_VALID_DAYS. */
  calibrationDueAt: string | null;
  interlockTestedAt: string | null;
  interlockDueAt: string | null;
  createdAt: string;
}

/** Issued MQTT credentials. The secret appears in this response only; the server keeps its hash. */
export interface RigCredentials {
  username: string;
  secret: string;
  issuedAt: string;
  /** Where the rig's controller connects (the server's configured broker address for rigs). */
  broker: { host: string; port: number };
}

export interface RigWithCredentials {
  rig: Rig;
  credentials: RigCredentials;
}

/** The MQTT user name of a rig: `rig-` + its code in lower case. */
export const rigMqttUsernameFor = (code: string) => `rig-${code.toLowerCase()}`;

/** Longest maintenance window one entry may book (longer work: book several). */
export const MAX_MAINTENANCE_DAYS = 31;

export const maintenanceInputSchema = z
  .object({
    startsAt: z.iso.datetime({ offset: true, message: 'Enter a date and time' }),
    endsAt: z.iso.datetime({ offset: true, message: 'Enter a date and time' }),
    reason: z.string().trim().min(3, 'Say what the maintenance is for').max(200),
  })
  .strict()
  .superRefine((m, ctx) => {
    const a = Date.parse(m.startsAt);
    const b = Date.parse(m.endsAt);
    if (!(b > a)) ctx.addIssue({ code: 'custom', path: ['endsAt'], message: 'The window must end after it starts' });
    else if (b - a > MAX_MAINTENANCE_DAYS * 86_400_000) {
      ctx.addIssue({ code: 'custom', path: ['endsAt'], message: `One window may last at most ${MAX_MAINTENANCE_DAYS} days` });
    }
  });
export type MaintenanceInput = z.infer<typeof maintenanceInputSchema>;

export interface MaintenanceWindow {
  id: string;
  rigId: string;
  rigCode: string;
  startsAt: string;
  endsAt: string;
  reason: string;
  createdAt: string;
}

/** GET /api/telemetry/rejections */
export const rejectionsQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(100),
  rig: rigCodeInputSchema.optional(),
});
export interface RejectedMessage {
  id: string;
  at: string;
  topic: string;
  rigCode: string | null;
  reason: string;
  excerpt: string;
}

/** The live state of an ingest (the process that runs it: the leader with EMBERLOT_WORKERS=elect). */
export const telemetryLiveSchema = z.object({
  mqttConnected: z.boolean(),
  databaseOk: z.boolean(),
  buffered: z.number().int().nonnegative(),
  bufferLimit: z.number().int().nonnegative(),
  batches: z.number().int().nonnegative(),
  lastBatchMs: finite().nonnegative().nullable(),
  pendingCommands: z.number().int().nonnegative(),
});
export type TelemetryLive = z.infer<typeof telemetryLiveSchema>;

/**
 * Whose figures `live` holds: this process's own ingest, or — on a standby API process — the
 * leader's, as it last sent them between processes (server/cluster/event-relay.ts). `measuredAt`
 * is the leader's clock; `ageSeconds` counts on this process's clock since they arrived.
 */
export interface TelemetryLiveSource {
  kind: 'own' | 'leader';
  processId: string | null;
  measuredAt: string;
  ageSeconds: number;
}

/** GET /api/telemetry/stats: durable counters plus the live state of the ingest. */
export interface TelemetryStats {
  counters: Record<string, number>;
  live: TelemetryLive | null;
  /** null with `live`: no ingest here and no recent figures from a leader. */
  liveSource: TelemetryLiveSource | null;
}

/** The maintenance record behind the start permit's dates. */
export const RIG_SERVICE_KINDS = ['calibration', 'interlock-test'] as const;
export type RigServiceKind = (typeof RIG_SERVICE_KINDS)[number];
export const RIG_SERVICE_LABEL: Record<RigServiceKind, string> = { calibration: 'Calibration', 'interlock-test': 'Interlock test' };

const day = (what: string) => z.iso.date({ message: `Enter ${what} as YYYY-MM-DD` });
const serviceNote = () => z.string().trim().max(200, 'At most 200 characters').default('');

/**
 * POST /api/rigs/:code/service-records. A calibration names the day it was done and the day it is
 * next due; an interlock test the day it was done (it counts for INTERLOCK_TEST_VALID_DAYS).
 */
export const serviceRecordInputSchema = z
  .discriminatedUnion('kind', [
    z
      .object({ kind: z.literal('calibration'), doneOn: day('the calibration date'), dueOn: day('the next due date'), note: serviceNote() })
      .strict(),
    z.object({ kind: z.literal('interlock-test'), doneOn: day('the test date'), note: serviceNote() }).strict(),
  ])
  .superRefine((r, ctx) => {
    if (r.kind === 'calibration' && !(r.dueOn > r.doneOn)) {
      ctx.addIssue({ code: 'custom', path: ['dueOn'], message: 'The next calibration falls due after the one just done' });
    }
  });
export type ServiceRecordInput = z.infer<typeof serviceRecordInputSchema>;

export interface RigServiceRecord {
  id: string;
  rigCode: string;
  kind: RigServiceKind;
  doneAt: string;
  dueAt: string | null;
  note: string;
  byName: string | null;
  createdAt: string;
}
