/**
 * A simulated rig on the network: its own mqtt.js client, credentials and last will; publishes
 * telemetry from the pure physics on an accelerated clock, obeys commands, keeps every sample in
 * its outbox until the server confirms it with `stored`, and injects faults on request.
 */
import mqtt, { type MqttClient } from 'mqtt';
import {
  commandAckSchema,
  parseCommand,
  rigClientId,
  telemetryColumnsText,
  topics,
  type CommandAck,
  type RigStatus,
} from '../shared/mqtt';
import { applyCommand } from './commands';
import { Outbox, type OutboxEntry } from './outbox';
import {
  DEFAULTS,
  DEMO_LOTS,
  createRigState,
  makeLotDevices,
  stepRig,
  type BiasMode,
  type DeviceModel,
  type RigState,
  type SocketSetup,
} from './physics';
import { createRng, hashString } from './rng';
import { buildTelemetry, malformedPayload, type SensorNoise } from './telemetry';

export interface RigFaults {
  /**
   * Sockets with poor heat sinking. With `rampCPerWPerH` > 0 (default 1) θca starts sound and
   * degrades toward `thetaCaCPerW` (default 24 °C/W) while powered — Tj creeps up over a few stress
   * hours, then runs away; with 0 the socket is poor from the start and runs away at once.
   */
  poorHeatSink?: { sockets: number[]; thetaCaCPerW?: number; rampCPerWPerH?: number };
  /** Lose the connection (socket dies, last will fires) after `afterWallS` for `forWallS`; repeat every `everyWallS`. */
  dropOff?: { afterWallS: number; forWallS: number; everyWallS?: number };
  /** Sensor noise on the published readings (the physics stays clean). */
  noise?: SensorNoise;
  /** Probability per sample of an extra malformed message on the telemetry topic. */
  malformedRate?: number;
  /** Every `everySamples` samples the rig's wall clock (`ts`) jumps by `jumpS` seconds (may be negative). */
  clockJump?: { everySamples: number; jumpS: number };
}

export interface RigConfig {
  rigCode: string;
  brokerUrl: string;
  username: string;
  password: string;
  /** Default `rig-{rigCode}` (the broker insists on that prefix). */
  clientId?: string;
  firmware?: string;
  /** Number of sockets (default 16) when `devices` is not given. */
  sockets?: number;
  mode?: BiasMode;
  /** Lot codes to load (from DEMO_LOTS), split evenly across the sockets; default every demo lot. */
  lots?: string[];
  devices?: DeviceModel[];
  /** First device serial number (keeps serials unique across a fleet). */
  serialStart?: number;
  chamberC?: number;
  setpointC?: number;
  humidityPct?: number | null;
  humidityCapable?: boolean;
  maxTempC?: number;
  /** Oven lag τ in stress hours (default 0.5). */
  chamberTauStressH?: number;
  /** Case lag τ in stress seconds (default 120). */
  caseTauStressS?: number;
  thetaCaCPerW?: number;
  /** Initial bias state of every socket and its setting (VCE or reverse V; IB or current limit). */
  biasOn?: boolean;
  vV?: number;
  iA?: number;
  /** Powered sockets: regulate IC at this current instead of forcing IB = iA. */
  icA?: number;
  /** Accelerated clock: stress hours per wall second (default 1; env EMBERLOT_CLOCK_RATE in main.ts). */
  stressHoursPerWallSecond?: number;
  /** Wall seconds between telemetry messages (default 0.25). */
  samplePeriodWallS?: number;
  outboxLimit?: number;
  /** Re-send an unconfirmed sample when it has waited this long (covers a server outage while the broker stays up). */
  resendAfterWallS?: number;
  maxResendPerTick?: number;
  reconnectWallS?: number;
  /** Stop sampling after this many samples (tests); the rig stays connected to flush its outbox. */
  maxSamples?: number;
  /** Last seq already used (a rig that persisted its counter); default 0. */
  seqStart?: number;
  seed?: number;
  /**
   * Telemetry payload form: 'columns' (version 2, the default: one array per quantity, ~40 % of
   * the bytes) or 'objects' (version 1, one object per socket). The server takes both.
   */
  telemetryForm?: 'columns' | 'objects';
  faults?: RigFaults;
  log?: (line: string) => void;
}

export interface RigStats {
  samples: number;
  published: number;
  resent: number;
  malformedSent: number;
  commandsApplied: number;
  commandsRefused: number;
  commandsInvalid: number;
  storedConfirmed: number;
  connects: number;
  disconnects: number;
  drops: number;
  /** Outbox entries lost to overflow — should stay 0. */
  outboxOverflow: number;
}

export interface RigHandle {
  readonly rigCode: string;
  readonly outbox: Outbox;
  readonly stats: RigStats;
  readonly connected: boolean;
  state(): RigState;
  lastSeq(): number;
  /** Fault: the connection dies now (last will fires) and comes back after `wallMs`. */
  dropFor(wallMs: number): void;
  /** Resolves once sampling is over (maxSamples) and the outbox is empty. */
  drained(timeoutMs?: number): Promise<void>;
  stop(): Promise<void>;
}

function buildSockets(config: RigConfig): SocketSetup[] {
  const seed = config.seed ?? hashString(config.rigCode);
  let devices = config.devices;
  if (!devices) {
    const n = config.sockets ?? 16;
    const lots = (config.lots ?? DEMO_LOTS.map((l) => l.lotCode)).map((code) => {
      const lot = DEMO_LOTS.find((l) => l.lotCode === code);
      if (!lot) throw new Error(`Unknown demo lot ${code} (known: ${DEMO_LOTS.map((l) => l.lotCode).join(', ')})`);
      return lot;
    });
    devices = [];
    const per = Math.ceil(n / lots.length);
    lots.forEach((lot, k) => {
      const count = Math.min(per, n - devices!.length);
      if (count > 0) devices!.push(...makeLotDevices(lot, count, seed + k, (config.serialStart ?? 1) + k * per));
    });
  }
  const poor = config.faults?.poorHeatSink;
  const poorSet = new Set(poor?.sockets ?? []);
  const sound = config.thetaCaCPerW ?? DEFAULTS.thetaCaCPerW;
  const poorTheta = poor?.thetaCaCPerW ?? DEFAULTS.poorThetaCaCPerW;
  const ramp = poor?.rampCPerWPerH ?? 1;
  return devices.map((device, i) => {
    const isPoor = poorSet.has(i);
    const mode = config.mode ?? 'powered';
    return {
      device,
      mode,
      thetaCaCPerW: isPoor && ramp <= 0 ? poorTheta : sound,
      thetaCaRampCPerWPerH: isPoor && ramp > 0 ? ramp : 0,
      thetaCaMaxCPerW: isPoor ? poorTheta : sound,
      caseTauS: config.caseTauStressS,
      biasOn: config.biasOn ?? false,
      vV: config.vV,
      ...(config.iA !== undefined ? (mode === 'powered' ? { ibA: config.iA } : { complianceA: config.iA }) : {}),
      ...(config.icA !== undefined && mode === 'powered' ? { icA: config.icA } : {}),
    };
  });
}

/** Initial physics state for a rig config (exported for tests and tools). */
export function initialRigState(config: RigConfig): RigState {
  return createRigState({
    rigCode: config.rigCode,
    sockets: buildSockets(config),
    chamberC: config.chamberC,
    setpointC: config.setpointC,
    chamberTauS: (config.chamberTauStressH ?? 0.5) * 3600,
    humidityPct: config.humidityPct ?? null,
    humidityCapable: config.humidityCapable,
    maxTempC: config.maxTempC,
  });
}

export function startRig(config: RigConfig): RigHandle {
  const rigCode = config.rigCode;
  const log = config.log ?? (() => undefined);
  const rng = createRng(config.seed ?? hashString(rigCode));
  const faults = config.faults ?? {};
  const samplePeriodMs = Math.max(10, (config.samplePeriodWallS ?? 0.25) * 1000);
  const dtStressS = (samplePeriodMs / 1000) * (config.stressHoursPerWallSecond ?? 1) * 3600;
  const resendAfterMs = (config.resendAfterWallS ?? 5) * 1000;
  const maxResend = config.maxResendPerTick ?? 500;
  const clientId = config.clientId ?? rigClientId(rigCode);
  const T = {
    telemetry: topics.telemetry(rigCode),
    status: topics.status(rigCode),
    commands: topics.commands(rigCode),
    acks: topics.commandAcks(rigCode),
  };

  let state = initialRigState(config);
  const outbox = new Outbox(config.outboxLimit ?? 50_000);
  let seq = config.seqStart ?? 0;
  let clockOffsetMs = 0;
  let client: MqttClient | null = null;
  let connected = false;
  let stopped = false;
  let lastError = '';
  type Timer = ReturnType<typeof setTimeout>;
  const timers: Timer[] = [];
  const recent = new Map<string, { ok: boolean; error?: string }>();
  const stats: RigStats = {
    samples: 0,
    published: 0,
    resent: 0,
    malformedSent: 0,
    commandsApplied: 0,
    commandsRefused: 0,
    commandsInvalid: 0,
    storedConfirmed: 0,
    connects: 0,
    disconnects: 0,
    drops: 0,
    get outboxOverflow() {
      return outbox.overflowDropped;
    },
  } as RigStats;

  const rigNow = () => new Date(Date.now() + clockOffsetMs);
  const statusPayload = (online: boolean) =>
    JSON.stringify({
      v: 1,
      rig: rigCode,
      online,
      ts: rigNow().toISOString(),
      ...(config.firmware ? { firmware: config.firmware } : {}),
      lastSeq: seq,
    } satisfies RigStatus);

  function send(c: MqttClient, e: OutboxEntry, isResend: boolean): void {
    c.publish(T.telemetry, e.payload, { qos: 1 });
    outbox.markSent(e.seq, Date.now());
    if (isResend) stats.resent++;
    else stats.published++;
  }

  function ack(c: MqttClient | null, a: Omit<CommandAck, 'v' | 'rig'>): void {
    const body: CommandAck = { v: 1, rig: rigCode, ...a };
    // mqtt.js queues QoS 1 while offline and sends on reconnect.
    c?.publish(T.acks, JSON.stringify(commandAckSchema.parse(body)), { qos: 1 });
  }

  function onMessage(c: MqttClient, topic: string, payload: Buffer): void {
    if (topic !== T.commands) return;
    const parsed = parseCommand(payload);
    if (!parsed.ok) {
      stats.commandsInvalid++;
      let cmdId: unknown;
      try {
        cmdId = (JSON.parse(payload.toString('utf8')) as { cmdId?: unknown })?.cmdId;
      } catch {
        /* not JSON: nothing to answer */
      }
      if (typeof cmdId === 'string' && /^[A-Za-z0-9._:-]{1,64}$/.test(cmdId)) {
        ack(c, { cmdId, ok: false, error: `invalid command: ${parsed.reason}`.slice(0, 500) });
      }
      log(`[${rigCode}] invalid command: ${parsed.reason}`);
      return;
    }
    const cmd = parsed.data;
    if (cmd.type === 'stored') {
      stats.storedConfirmed += outbox.confirm(cmd.ranges);
      return;
    }
    const seen = recent.get(cmd.cmdId);
    if (seen) {
      ack(c, { cmdId: cmd.cmdId, ...seen }); // idempotent: same answer, not applied twice
      return;
    }
    const result = applyCommand(state, cmd);
    if (result.ok) {
      state = result.state;
      stats.commandsApplied++;
    } else {
      stats.commandsRefused++;
    }
    const outcome = result.ok ? { ok: true } : { ok: false, error: result.error };
    recent.set(cmd.cmdId, outcome);
    if (recent.size > 1000) recent.delete(recent.keys().next().value as string);
    ack(c, { cmdId: cmd.cmdId, ...outcome });
  }

  function connect(): void {
    const c = mqtt.connect(config.brokerUrl, {
      clientId,
      username: config.username,
      password: config.password,
      protocolVersion: 4,
      clean: true,
      keepalive: 10,
      connectTimeout: 5000,
      reconnectPeriod: (config.reconnectWallS ?? 0.5) * 1000,
      will: { topic: T.status, payload: Buffer.from(statusPayload(false)), qos: 1, retain: true },
    });
    client = c;
    c.on('connect', () => {
      if (client !== c) return;
      lastError = '';
      connected = true;
      stats.connects++;
      log(`[${rigCode}] connected`);
      c.publish(T.status, statusPayload(true), { qos: 1, retain: true });
      c.subscribe(T.commands, { qos: 1 });
      // Replay every unconfirmed sample in seq order before any new one.
      for (const e of outbox.pending()) send(c, e, true);
    });
    c.on('close', () => {
      if (client === c && connected) {
        stats.disconnects++;
        log(`[${rigCode}] disconnected`);
      }
      if (client === c) connected = false;
      // The will goes out with the next CONNECT: keep its lastSeq current.
      if (c.options.will) c.options.will.payload = Buffer.from(statusPayload(false));
    });
    c.on('message', (topic, payload) => onMessage(c, topic, payload));
    c.on('error', (err) => {
      // While the broker is down every retry fails the same way: say it once.
      if (err.message !== lastError) log(`[${rigCode}] mqtt error: ${err.message}`);
      lastError = err.message;
    });
  }

  function tick(): void {
    if (stopped) return;
    const sampling = config.maxSamples === undefined || stats.samples < config.maxSamples;
    if (sampling) {
      state = stepRig(state, dtStressS);
      seq += 1;
      stats.samples++;
      if (faults.clockJump && faults.clockJump.everySamples > 0 && stats.samples % faults.clockJump.everySamples === 0) {
        clockOffsetMs += faults.clockJump.jumpS * 1000;
      }
      const message = buildTelemetry(state, seq, rigNow(), { noise: faults.noise, rng });
      const payload = config.telemetryForm === 'objects' ? JSON.stringify(message) : telemetryColumnsText(message);
      outbox.add(seq, payload);
      if (connected && client) send(client, { seq, payload, lastSentMs: 0 }, false);
      if (connected && client && faults.malformedRate && rng() < faults.malformedRate) {
        client.publish(T.telemetry, malformedPayload(state, rng), { qos: 1 });
        stats.malformedSent++;
      }
    }
    if (connected && client) {
      const now = Date.now();
      for (const e of outbox.due(now, resendAfterMs, maxResend)) send(client, e, true);
    }
  }

  function dropFor(wallMs: number): void {
    if (stopped || !client) return;
    const c = client;
    client = null;
    if (connected) stats.disconnects++;
    connected = false;
    stats.drops++;
    log(`[${rigCode}] dropping off for ${wallMs} ms`);
    c.end(true); // no DISCONNECT: the broker sees the socket die and publishes the will
    timers.push(
      setTimeout(() => {
        if (!stopped) connect();
      }, wallMs),
    );
  }

  connect();
  timers.push(setInterval(tick, samplePeriodMs) as unknown as Timer);
  if (faults.dropOff) {
    const d = faults.dropOff;
    timers.push(
      setTimeout(() => {
        dropFor(d.forWallS * 1000);
        if (d.everyWallS) timers.push(setInterval(() => dropFor(d.forWallS * 1000), d.everyWallS * 1000) as unknown as Timer);
      }, d.afterWallS * 1000),
    );
  }

  return {
    rigCode,
    outbox,
    stats,
    get connected() {
      return connected;
    },
    state: () => state,
    lastSeq: () => seq,
    dropFor,
    drained(timeoutMs = 10_000) {
      const start = Date.now();
      return new Promise<void>((resolve, reject) => {
        const check = () => {
          const done = config.maxSamples !== undefined && stats.samples >= config.maxSamples && outbox.size === 0;
          if (done) return resolve();
          if (Date.now() - start > timeoutMs) {
            return reject(new Error(`rig ${rigCode} not drained: ${outbox.size} unconfirmed, ${stats.samples} samples`));
          }
          setTimeout(check, 20);
        };
        check();
      });
    },
    async stop() {
      if (stopped) return;
      stopped = true;
      for (const t of timers) {
        clearTimeout(t);
        clearInterval(t as ReturnType<typeof setInterval>);
      }
      const c = client;
      client = null;
      if (!c) return;
      if (connected) {
        connected = false;
        await new Promise<void>((resolve) => {
          const t = setTimeout(resolve, 1000);
          c.publish(T.status, statusPayload(false), { qos: 1, retain: true }, () => {
            clearTimeout(t);
            resolve();
          });
        });
        await c.endAsync().catch(() => undefined);
      } else {
        await c.endAsync(true).catch(() => undefined);
      }
    },
  };
}

export interface RigFleet {
  rigs: RigHandle[];
  stop(): Promise<void>;
}

/** Start several rigs; device serials are kept unique across the fleet unless configs set them. */
export function createRigFleet(configs: RigConfig[]): RigFleet {
  let nextSerial = 1;
  const rigs = configs.map((cfg) => {
    const n = cfg.devices?.length ?? cfg.sockets ?? 16;
    const serialStart = cfg.serialStart ?? nextSerial;
    nextSerial = serialStart + n;
    return startRig({ ...cfg, serialStart });
  });
  return {
    rigs,
    async stop() {
      await Promise.all(rigs.map((r) => r.stop()));
    },
  };
}
