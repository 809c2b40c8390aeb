/**
 * A lightweight publisher standing in for a rig in the ingest scenario: the same MQTT identity,
 * credentials, topics and payloads as a real rig (shared/mqtt contracts; telemetry in column form), but no physics, so it
 * can publish as fast as the pipeline takes. It honours the `stored` acknowledgement protocol:
 * every message stays in its outbox until the server confirms its seq, at most `window` messages
 * are unconfirmed at a time (the flow control), and a message unconfirmed for `resendMs` is sent
 * again with the same seq (the server de-duplicates).
 */
import mqtt, { type MqttClient } from 'mqtt';
import { FLAG_BIAS_ON, parseCommand, rigClientId, topics } from '../../shared/mqtt';
import { mulberry32 } from '../../shared/random';

export interface LightRigOptions {
  rigCode: string;
  username: string;
  password: string;
  brokerUrl: string;
  sockets: number;
  window: number;
  resendMs: number;
  seed: number;
  /** Bias reaching the devices (default true: a working floor). */
  biasOn?: boolean;
}

interface Entry {
  payload: string;
  firstAt: number;
  sentAt: number;
}

const r2 = (x: number) => Math.round(x * 100) / 100;
/** Sets of socket readings a publisher cycles through (a prime: no lock-step with windows of 20). */
const READING_VARIANTS = 61;

export class LightRig {
  private client: MqttClient | null = null;
  private readonly outbox = new Map<number, Entry>();
  private readonly topic: string;
  private readonly rnd: () => number;
  private seq = 0;
  private producing = false;
  private resendTimer: ReturnType<typeof setInterval> | null = null;
  connected = false;
  readonly stats = { published: 0, resent: 0, confirmed: 0, storedCommands: 0 };
  /** ms from first publish to the `stored` confirmation, for messages first sent at or after `latencyFrom`. */
  readonly ackLatencies: number[] = [];
  latencyFrom = Infinity;
  latencyTo = Infinity;

  private readonly biasOn: boolean;
  private readonly readings: string[];

  constructor(private readonly o: LightRigOptions) {
    this.biasOn = o.biasOn ?? true;
    this.topic = topics.telemetry(o.rigCode);
    this.rnd = mulberry32(o.seed);
    this.readings = Array.from({ length: READING_VARIANTS }, () => this.drawReadings());
  }

  connect(): Promise<void> {
    const o = this.o;
    const status = (online: boolean) =>
      JSON.stringify({ v: 1, rig: o.rigCode, online, ts: new Date().toISOString(), firmware: 'bench-light 1.0', lastSeq: this.seq });
    return new Promise((resolve, reject) => {
      const c = mqtt.connect(o.brokerUrl, {
        clientId: rigClientId(o.rigCode),
        username: o.username,
        password: o.password,
        protocolVersion: 4,
        clean: true,
        keepalive: 30,
        connectTimeout: 10_000,
        reconnectPeriod: 500,
        will: { topic: topics.status(o.rigCode), payload: Buffer.from(status(false)), qos: 1, retain: true },
      });
      this.client = c;
      const timer = setTimeout(() => reject(new Error(`${o.rigCode}: no CONNACK within 20 s`)), 20_000);
      c.on('connect', () => {
        this.connected = true;
        c.publish(topics.status(o.rigCode), status(true), { qos: 1, retain: true });
        c.subscribe(topics.commands(o.rigCode), { qos: 1 }, (err) => {
          clearTimeout(timer);
          if (err) return reject(err);
          // (Re)connect: replay everything unconfirmed in seq order, then carry on.
          for (const [seq, e] of this.outbox) this.send(seq, e, true);
          resolve();
          this.pump();
        });
      });
      c.on('close', () => (this.connected = false));
      c.on('error', () => undefined);
      c.on('message', (_topic, payload) => this.onCommand(payload));
    });
  }

  /**
   * Telemetry in column form (v2, as the simulator sends it), written directly as text: this
   * process shares the machine's two cores with the pipeline it loads (a real rig is its own
   * computer), and building the arrays for JSON.stringify cost it about twice as much. The socket
   * readings cycle through READING_VARIANTS sets drawn once per publisher (formatting 128 numbers
   * per message was most of this process's CPU); seq, ts and the stress clock are every message's
   * own. tests/unit/bench-light-rig.test.ts checks the text against the v2 schema and
   * telemetryColumnsText of the same values.
   */
  message(seq: number, now: number): string {
    const readings = this.readings[seq % READING_VARIANTS];
    // A rig reporting once a second: one stress-clock second per message.
    return `{"v":2,"rig":"${this.o.rigCode}","seq":${seq},"ts":"${new Date(now).toISOString()}","stressClockS":${seq},${readings}}`;
  }

  /** The part of a message after the stress clock: chamber, humidity, setpoint and the socket columns. */
  private drawReadings(): string {
    const rnd = this.rnd;
    const bias = this.biasOn;
    let socket = '';
    let caseCs = '';
    let vVs = '';
    let iAs = '';
    let flags = '';
    for (let i = 0; i < this.o.sockets; i++) {
      const caseC = r2(95 + (i % 8) * 0.3 + (rnd() - 0.5) * 0.2);
      const iA = bias ? Math.round((0.3 + (rnd() - 0.5) * 0.004) * 1e5) / 1e5 : 1e-8;
      const sep = i ? ',' : '';
      socket += sep + i;
      caseCs += sep + caseC;
      vVs += sep + (bias ? 20 : 0);
      iAs += sep + iA;
      flags += sep + (bias ? FLAG_BIAS_ON : 0);
    }
    const chamberC = r2(85 + (rnd() - 0.5) * 0.2);
    return `"chamberC":${chamberC},"humidityPct":null,"setpointC":85,"socket":[${socket}],"caseC":[${caseCs}],"vV":[${vVs}],"iA":[${iAs}],"flags":[${flags}]`;
  }

  private send(seq: number, e: Entry, resend: boolean): void {
    e.sentAt = Date.now();
    this.client!.publish(this.topic, e.payload, { qos: 1 });
    if (resend) this.stats.resent++;
  }

  private pump(): void {
    if (!this.producing || !this.connected || !this.client) return;
    while (this.outbox.size < this.o.window) {
      const seq = ++this.seq;
      const now = Date.now();
      const e: Entry = { payload: this.message(seq, now), firstAt: now, sentAt: now };
      this.outbox.set(seq, e);
      this.stats.published++;
      this.send(seq, e, false);
    }
  }

  private onCommand(payload: Buffer): void {
    const cmd = parseCommand(payload);
    if (!cmd.ok || cmd.data.type !== 'stored') return;
    this.stats.storedCommands++;
    const now = Date.now();
    for (const [from, to] of cmd.data.ranges) {
      for (let s = from; s <= to; s++) {
        const e = this.outbox.get(s);
        if (!e) continue;
        this.outbox.delete(s);
        this.stats.confirmed++;
        if (e.firstAt >= this.latencyFrom && e.firstAt < this.latencyTo) this.ackLatencies.push(now - e.firstAt);
      }
    }
    this.pump();
  }

  startProducing(): void {
    this.producing = true;
    this.resendTimer = setInterval(() => {
      if (!this.connected || !this.client) return;
      const now = Date.now();
      for (const [seq, e] of this.outbox) if (now - e.sentAt >= this.o.resendMs) this.send(seq, e, true);
    }, 250);
    this.pump();
  }

  stopProducing(): void {
    this.producing = false;
  }

  get unconfirmed(): number {
    return this.outbox.size;
  }

  get lastSeq(): number {
    return this.seq;
  }

  async close(): Promise<void> {
    if (this.resendTimer) clearInterval(this.resendTimer);
    const c = this.client;
    this.client = null;
    if (c) await c.endAsync().catch(() => undefined);
  }
}
