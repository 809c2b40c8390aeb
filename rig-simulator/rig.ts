/**
 * A simulated rig on the network: its own mqtt.js client, credentials and last will; publishes
 * telemetry from the pure physics on an accelerated clock, obeys commands, keeps every sample in
 * its outbox until the server confirms it with `stored`, and injects faults on request.
 */
import mqtt, { type MqttClient } from 'mqtt';
import {
  commandAckSchema,
  parseBrokerList,
  rigClientId,
  telemetryColumnsText,
  topics,
  type CommandAck,
  type RigStatus,
} from '../shared/mqtt';
import { CommandDesk } from './commands';
import { Outbox, type OutboxEntry } from './outbox';
import {
  DEFAULTS,
  DEMO_LOTS,
  clearSwingReports,
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
  /**
   * Sockets whose thermal pad dries out: θca starts at `startCPerW` (default the rig's sound value)
   * and rises by `rampCPerWPerH` (default 0.5) °C/W per energised stress hour up to `maxCPerW`
   * (default 24) — slowly, over hours, so the thermal model's flag (server/modules/thermal) can
   * catch it long before protection has to trip the socket.
   */
  dryingPad?: { sockets: number[]; startCPerW?: number; rampCPerWPerH?: number; maxCPerW?: number };
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
  /** One broker URL or a comma-separated list (tried in turn on each reconnect). */
  brokerUrl: string;
  /** MQTT persistent session (clean = false) with the fixed client id. */
  persistentSession?: boolean;
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
  const pad = config.faults?.dryingPad;
  const padSet = new Set(pad?.sockets ?? []);
  return devices.map((device, i) => {
    const isPoor = poorSet.has(i);
    const isPad = !isPoor && padSet.has(i);
    const mode = config.mode ?? 'powered';
    const thermal = isPad
      ? {
          thetaCaCPerW: pad?.startCPerW ?? sound,
          thetaCaRampCPerWPerH: pad?.rampCPerWPerH ?? 0.5,
          thetaCaMaxCPerW: pad?.maxCPerW ?? DEFAULTS.poorThetaCaCPerW,
        }
      : {
          thetaCaCPerW: isPoor && ramp <= 0 ? poorTheta : sound,
          thetaCaRampCPerWPerH: isPoor && ramp > 0 ? ramp : 0,
          thetaCaMaxCPerW: isPoor ? poorTheta : sound,
        };
    return {
      device,
      mode,
      ...thermal,
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
  const rig = new SimulatedRig(config);
  rig.start();
  return rig;
}

type Timer = ReturnType<typeof setTimeout>;

/**
 * One rig, in parts: the connection and its subscriptions (connect, onConnect, onClose), command
 * handling (onMessage, with the CommandDesk of commands.ts), the physics tick (tick → sample),
 * the outbox and publishing (publishSample, send, resendDue) and fault injection (clock jumps,
 * malformed messages, drop-offs). It reads `config` on every tick (tests change maxSamples).
 */
class SimulatedRig implements RigHandle {
  readonly rigCode: string;
  readonly outbox: Outbox;
  readonly stats: RigStats;
  private physics: RigState;
  private seq: number;
  private clockOffsetMs = 0;
  private client: MqttClient | null = null;
  private isConnected = false;
  private stopped = false;
  private lastError = '';
  private readonly timers: Timer[] = [];
  private readonly desk = new CommandDesk();
  private readonly log: (line: string) => void;
  private readonly rng: () => number;
  private readonly faults: RigFaults;
  private readonly samplePeriodMs: number;
  private readonly dtStressS: number;
  private readonly resendAfterMs: number;
  private readonly maxResend: number;
  private readonly topics: { telemetry: string; status: string; commands: string; acks: string };

  constructor(private readonly config: RigConfig) {
    const rigCode = config.rigCode;
    this.rigCode = rigCode;
    this.log = config.log ?? (() => undefined);
    this.rng = createRng(config.seed ?? hashString(rigCode));
    this.faults = config.faults ?? {};
    this.samplePeriodMs = Math.max(10, (config.samplePeriodWallS ?? 0.25) * 1000);
    this.dtStressS = (this.samplePeriodMs / 1000) * (config.stressHoursPerWallSecond ?? 1) * 3600;
    this.resendAfterMs = (config.resendAfterWallS ?? 5) * 1000;
    this.maxResend = config.maxResendPerTick ?? 500;
    this.topics = {
      telemetry: topics.telemetry(rigCode),
      status: topics.status(rigCode),
      commands: topics.commands(rigCode),
      acks: topics.commandAcks(rigCode),
    };
    this.physics = initialRigState(config);
    this.outbox = new Outbox(config.outboxLimit ?? 50_000);
    this.seq = config.seqStart ?? 0;
    const outbox = this.outbox;
    this.stats = {
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
  }

  get connected(): boolean {
    return this.isConnected;
  }

  state = (): RigState => this.physics;

  lastSeq = (): number => this.seq;

  start(): void {
    this.connect();
    this.timers.push(setInterval(() => this.tick(), this.samplePeriodMs) as unknown as Timer);
    this.scheduleDropOff();
  }

  // -------------------------------------------------------------------------------------------
  // Connection and subscriptions

  private rigNow(): Date {
    return new Date(Date.now() + this.clockOffsetMs);
  }

  private statusPayload(online: boolean): string {
    return JSON.stringify({
      v: 1,
      rig: this.rigCode,
      online,
      ts: this.rigNow().toISOString(),
      ...(this.config.firmware ? { firmware: this.config.firmware } : {}),
      lastSeq: this.seq,
    } satisfies RigStatus);
  }

  private connect(): void {
    const target = parseBrokerList(this.config.brokerUrl);
    const c = mqtt.connect(target.url, {
      ...(target.servers ? { servers: target.servers } : {}),
      clientId: this.config.clientId ?? rigClientId(this.rigCode),
      username: this.config.username,
      password: this.config.password,
      protocolVersion: 4,
      // A persistent session (cluster layout): commands published while the rig moves between
      // brokers wait for it in the shared session instead of the server's next re-send.
      clean: !this.config.persistentSession,
      keepalive: 10,
      connectTimeout: 5000,
      reconnectPeriod: (this.config.reconnectWallS ?? 0.5) * 1000,
      will: { topic: this.topics.status, payload: Buffer.from(this.statusPayload(false)), qos: 1, retain: true },
    });
    this.client = c;
    c.on('connect', () => this.onConnect(c));
    c.on('close', () => this.onClose(c));
    c.on('message', (topic, payload) => this.onMessage(c, topic, payload));
    c.on('error', (err) => {
      // While the broker is down every retry fails the same way: say it once.
      if (err.message !== this.lastError) this.log(`[${this.rigCode}] mqtt error: ${err.message}`);
      this.lastError = err.message;
    });
  }

  private onConnect(c: MqttClient): void {
    if (this.client !== c) return;
    this.lastError = '';
    this.isConnected = true;
    this.stats.connects++;
    this.log(`[${this.rigCode}] connected`);
    c.publish(this.topics.status, this.statusPayload(true), { qos: 1, retain: true });
    c.subscribe(this.topics.commands, { qos: 1 });
    // Replay every unconfirmed sample in seq order before any new one.
    for (const e of this.outbox.pending()) this.send(c, e, true);
  }

  private onClose(c: MqttClient): void {
    if (this.client === c && this.isConnected) {
      this.stats.disconnects++;
      this.log(`[${this.rigCode}] disconnected`);
    }
    if (this.client === c) this.isConnected = false;
    // The will goes out with the next CONNECT: keep its lastSeq current.
    if (c.options.will) c.options.will.payload = Buffer.from(this.statusPayload(false));
  }

  // -------------------------------------------------------------------------------------------
  // Commands

  private onMessage(c: MqttClient, topic: string, payload: Buffer): void {
    if (topic !== this.topics.commands) return;
    const out = this.desk.handle(payload, this.physics);
    if (out.kind === 'invalid') {
      this.stats.commandsInvalid++;
      if (out.cmdId) this.ack(c, { cmdId: out.cmdId, ok: false, error: `invalid command: ${out.reason}`.slice(0, 500) });
      this.log(`[${this.rigCode}] invalid command: ${out.reason}`);
      return;
    }
    if (out.kind === 'stored') {
      this.stats.storedConfirmed += this.outbox.confirm(out.ranges);
      return;
    }
    if (!out.repeat) {
      this.physics = out.state;
      if (out.ok) this.stats.commandsApplied++;
      else this.stats.commandsRefused++;
    }
    // A repeat is idempotent: the same answer, not applied twice.
    this.ack(c, out.ok ? { cmdId: out.cmdId, ok: true } : { cmdId: out.cmdId, ok: false, error: out.error });
  }

  private ack(c: MqttClient | null, a: Omit<CommandAck, 'v' | 'rig'>): void {
    const body: CommandAck = { v: 1, rig: this.rigCode, ...a };
    // mqtt.js queues QoS 1 while offline and sends on reconnect.
    c?.publish(this.topics.acks, JSON.stringify(commandAckSchema.parse(body)), { qos: 1 });
  }

  // -------------------------------------------------------------------------------------------
  // The physics tick

  private tick(): void {
    if (this.stopped) return;
    const sampling = this.config.maxSamples === undefined || this.stats.samples < this.config.maxSamples;
    if (sampling) this.sample();
    this.resendDue();
  }

  /** One step of the physics, one telemetry message into the outbox and out. */
  private sample(): void {
    this.physics = stepRig(this.physics, this.dtStressS);
    this.seq += 1;
    this.stats.samples++;
    this.maybeJumpClock();
    const message = buildTelemetry(this.physics, this.seq, this.rigNow(), { noise: this.faults.noise, rng: this.rng });
    this.physics = clearSwingReports(this.physics);
    const payload = this.config.telemetryForm === 'objects' ? JSON.stringify(message) : telemetryColumnsText(message);
    this.publishSample(this.seq, payload);
    this.maybeSendMalformed();
  }

  // -------------------------------------------------------------------------------------------
  // Outbox and publishing

  private publishSample(seq: number, payload: string): void {
    this.outbox.add(seq, payload);
    if (this.isConnected && this.client) this.send(this.client, { seq, payload, lastSentMs: 0 }, false);
  }

  private send(c: MqttClient, e: OutboxEntry, isResend: boolean): void {
    c.publish(this.topics.telemetry, e.payload, { qos: 1 });
    this.outbox.markSent(e.seq, Date.now());
    if (isResend) this.stats.resent++;
    else this.stats.published++;
  }

  /** Samples unconfirmed for resendAfterWallS go out again (a server outage while the broker stays up). */
  private resendDue(): void {
    if (!this.isConnected || !this.client) return;
    for (const e of this.outbox.due(Date.now(), this.resendAfterMs, this.maxResend)) this.send(this.client, e, true);
  }

  // -------------------------------------------------------------------------------------------
  // Fault injection

  private maybeJumpClock(): void {
    const j = this.faults.clockJump;
    if (j && j.everySamples > 0 && this.stats.samples % j.everySamples === 0) this.clockOffsetMs += j.jumpS * 1000;
  }

  private maybeSendMalformed(): void {
    if (this.isConnected && this.client && this.faults.malformedRate && this.rng() < this.faults.malformedRate) {
      this.client.publish(this.topics.telemetry, malformedPayload(this.physics, this.rng), { qos: 1 });
      this.stats.malformedSent++;
    }
  }

  private scheduleDropOff(): void {
    const d = this.faults.dropOff;
    if (!d) return;
    this.timers.push(
      setTimeout(() => {
        this.dropFor(d.forWallS * 1000);
        if (d.everyWallS) this.timers.push(setInterval(() => this.dropFor(d.forWallS * 1000), d.everyWallS * 1000) as unknown as Timer);
      }, d.afterWallS * 1000),
    );
  }

  dropFor = (wallMs: number): void => {
    if (this.stopped || !this.client) return;
    const c = this.client;
    this.client = null;
    if (this.isConnected) this.stats.disconnects++;
    this.isConnected = false;
    this.stats.drops++;
    this.log(`[${this.rigCode}] dropping off for ${wallMs} ms`);
    c.end(true); // no DISCONNECT: the broker sees the socket die and publishes the will
    this.timers.push(
      setTimeout(() => {
        if (!this.stopped) this.connect();
      }, wallMs),
    );
  };

  // -------------------------------------------------------------------------------------------
  // End

  drained = (timeoutMs = 10_000): Promise<void> => {
    const start = Date.now();
    return new Promise<void>((resolve, reject) => {
      const check = () => {
        const done = this.config.maxSamples !== undefined && this.stats.samples >= this.config.maxSamples && this.outbox.size === 0;
        if (done) return resolve();
        if (Date.now() - start > timeoutMs) {
          return reject(new Error(`rig ${this.rigCode} not drained: ${this.outbox.size} unconfirmed, ${this.stats.samples} samples`));
        }
        setTimeout(check, 20);
      };
      check();
    });
  };

  stop = async (): Promise<void> => {
    if (this.stopped) return;
    this.stopped = true;
    for (const t of this.timers) {
      clearTimeout(t);
      clearInterval(t as ReturnType<typeof setInterval>);
    }
    const c = this.client;
    this.client = null;
    if (!c) return;
    if (!this.isConnected) {
      await c.endAsync(true).catch(() => undefined);
      return;
    }
    this.isConnected = false;
    await new Promise<void>((resolve) => {
      const t = setTimeout(resolve, 1000);
      c.publish(this.topics.status, this.statusPayload(false), { qos: 1, retain: true }, () => {
        clearTimeout(t);
        resolve();
      });
    });
    await c.endAsync().catch(() => undefined);
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
