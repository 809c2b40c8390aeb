/**
 * The server's MQTT client: one privileged mqtt.js connection that subscribes to every rig's
 * telemetry, status and command-acks (handed to the ingest) and implements RigLink — commands
 * published at QoS 1 with a cmdId, answered on command-acks. Rigs use clean sessions, so a command
 * is re-published with the SAME cmdId until it is acknowledged or times out (rigs apply a cmdId
 * once); commands issued while disconnected wait and go out on reconnect. Reconnects back off
 * from 250 ms to 10 s; a broker that is not up yet is logged once and retried forever.
 */
import { randomBytes } from 'node:crypto';
import mqtt, { type MqttClient } from 'mqtt';
import { commandSchema, describeIssues, parseBrokerList, topics, type CommandAck, type StoredCommand } from '../../../shared/mqtt';
import type { RigCommandBody, RigLink } from './contracts';

export interface MqttRigLinkOptions {
  url: string;
  username: string;
  password: string;
  clientId?: string;
  /** Every message from the subscriptions (telemetry, status, command-acks). */
  onMessage: (topic: string, payload: Buffer) => void;
  /** RigLink.seqSeen, answered by the ingest. */
  seqSeen?: (rigCode: string) => number | null;
  log?: (line: string) => void;
  minBackoffMs?: number;
  maxBackoffMs?: number;
  /** Re-publish an unacknowledged command after this long (default 2 s). */
  resendMs?: number;
  defaultTimeoutMs?: number;
}

export class RigCommandError extends Error {
  constructor(
    message: string,
    readonly rigCode: string,
    readonly cmdId: string,
    readonly reason: 'timeout' | 'refused' | 'invalid' | 'stopped',
    /** The rig's own words when it refused (ack.error). */
    readonly rigError: string | null = null,
  ) {
    super(message);
    this.name = 'RigCommandError';
  }
}

interface Pending {
  rigCode: string;
  cmdId: string;
  payload: string;
  lastSentAt: number;
  promise: Promise<CommandAck>;
  resolve: (ack: CommandAck) => void;
  reject: (err: Error) => void;
  timer: ReturnType<typeof setTimeout>;
}

export class MqttRigLink implements RigLink {
  private client: MqttClient | null = null;
  private readonly pending = new Map<string, Pending>();
  private readonly revokes = new Set<string>();
  private backoffMs: number;
  private lastError = '';
  private wasConnected = false;
  private stopped = false;
  private resendTimer: ReturnType<typeof setInterval> | null = null;
  private cmdCounter = 0;
  private readonly boot = randomBytes(3).toString('hex');
  private readonly log: (line: string) => void;
  private readonly resendMs: number;
  private readonly minBackoffMs: number;
  private readonly maxBackoffMs: number;

  constructor(private readonly opts: MqttRigLinkOptions) {
    this.log = opts.log ?? ((line) => console.log(`[mqtt] ${line}`));
    this.minBackoffMs = opts.minBackoffMs ?? 250;
    this.maxBackoffMs = opts.maxBackoffMs ?? 10_000;
    this.backoffMs = this.minBackoffMs;
    this.resendMs = opts.resendMs ?? 2_000;
  }

  start(): void {
    if (this.client || this.stopped) return;
    const target = parseBrokerList(this.opts.url);
    const c = mqtt.connect(target.url, {
      ...(target.servers ? { servers: target.servers } : {}),
      clientId: this.opts.clientId ?? `emberlot-server-${process.pid}-${this.boot}`,
      username: this.opts.username,
      password: this.opts.password,
      protocolVersion: 4,
      clean: true,
      keepalive: 15,
      connectTimeout: 5_000,
      reconnectPeriod: this.minBackoffMs,
      resubscribe: false,
    });
    this.client = c;
    c.on('connect', () => {
      this.backoffMs = this.minBackoffMs;
      c.options.reconnectPeriod = this.backoffMs;
      // With a list of brokers, name the one this connection reached.
      const where = target.servers ? `mqtt://${c.options.host}:${c.options.port}` : this.opts.url;
      this.log(`${this.lastError ? 'reconnected' : 'connected'} to ${where}`);
      this.lastError = '';
      this.wasConnected = true;
      // Telemetry at QoS 0: its delivery is already guaranteed end to end — a rig keeps every
      // message until the server's `stored` names it and re-sends it otherwise — and with a clean
      // session QoS 1 could not cover a dropped connection anyway. It saves a PUBACK per message
      // here and the broker's in-flight bookkeeping. Status and acks stay at QoS 1.
      c.subscribe(
        {
          [topics.all.telemetry]: { qos: 0 },
          [topics.all.status]: { qos: 1 },
          [topics.all.commandAcks]: { qos: 1 },
          [topics.all.chamber]: { qos: 1 },
        },
        (err, granted) => {
          const refused = (granted ?? []).filter((g) => g.qos === 128);
          if (err || refused.length) this.log(`subscription refused: ${err?.message ?? refused.map((g) => g.topic).join(', ')}`);
          // Acks can arrive now: (re)send everything still waiting.
          for (const p of this.pending.values()) this.publishPending(p);
          for (const rig of this.revokes) this.publishRevoke(rig);
        },
      );
    });
    c.on('close', () => {
      if (this.stopped) return;
      if (this.wasConnected) {
        this.wasConnected = false;
        this.log(`lost the broker at ${this.opts.url}; reconnecting`);
        this.lastError = this.lastError || 'connection lost';
      }
      this.backoffMs = Math.min(this.backoffMs * 2, this.maxBackoffMs);
      c.options.reconnectPeriod = this.backoffMs;
    });
    c.on('error', (err) => {
      // While the broker is down every retry fails the same way: say it once.
      if (err.message !== this.lastError) this.log(`broker not reachable (${err.message}); will keep retrying`);
      this.lastError = err.message;
    });
    c.on('message', (topic, payload) => {
      try {
        this.opts.onMessage(topic, payload);
      } catch (err) {
        this.log(`message handler failed on ${topic}: ${(err as Error).message}`);
      }
    });
    this.resendTimer = setInterval(() => this.resendDue(), Math.max(100, Math.floor(this.resendMs / 2)));
  }

  connected(): boolean {
    return !!this.client?.connected;
  }

  pendingCount(): number {
    return this.pending.size;
  }

  seqSeen(rigCode: string): number | null {
    return this.opts.seqSeen?.(rigCode) ?? null;
  }

  send(rigCode: string, command: RigCommandBody, opts: { cmdId?: string; timeoutMs?: number } = {}): Promise<CommandAck> {
    const cmdId = opts.cmdId ?? `srv-${this.boot}-${++this.cmdCounter}`;
    const parsed = commandSchema.safeParse({ ...command, v: 1, cmdId, ts: new Date().toISOString() });
    if (!parsed.success) {
      return Promise.reject(
        new RigCommandError(`Invalid command for ${rigCode}: ${describeIssues(parsed.error)}`, rigCode, cmdId, 'invalid'),
      );
    }
    if (this.stopped) return Promise.reject(new RigCommandError('The rig link is stopped.', rigCode, cmdId, 'stopped'));
    let topic: string;
    try {
      topic = topics.commands(rigCode);
    } catch (err) {
      return Promise.reject(new RigCommandError((err as Error).message, rigCode, cmdId, 'invalid'));
    }
    const payload = JSON.stringify(parsed.data);
    if (parsed.data.type === 'stored') {
      // `stored` is never acknowledged by rigs: done once the broker has it.
      return new Promise((resolve, reject) => {
        if (!this.client) return reject(new RigCommandError('Not started.', rigCode, cmdId, 'stopped'));
        this.client.publish(topic, payload, { qos: 1 }, (err) => (err ? reject(err) : resolve({ v: 1, rig: rigCode, cmdId, ok: true })));
      });
    }
    const key = `${rigCode}\u0000${cmdId}`;
    const existing = this.pending.get(key);
    if (existing) return existing.promise; // same cmdId in flight: share its outcome
    const timeoutMs = opts.timeoutMs ?? this.opts.defaultTimeoutMs ?? 10_000;
    let resolve!: (ack: CommandAck) => void;
    let reject!: (err: Error) => void;
    const promise = new Promise<CommandAck>((res, rej) => {
      resolve = res;
      reject = rej;
    });
    const p: Pending = {
      rigCode,
      cmdId,
      payload,
      lastSentAt: 0,
      promise,
      resolve,
      reject,
      timer: setTimeout(() => {
        this.pending.delete(key);
        const where = this.connected() ? `rig ${rigCode} did not acknowledge` : 'the MQTT broker is not reachable';
        reject(
          new RigCommandError(
            `Command ${parsed.data.type} (${cmdId}) timed out after ${timeoutMs} ms: ${where}.`,
            rigCode,
            cmdId,
            'timeout',
          ),
        );
      }, timeoutMs),
    };
    this.pending.set(key, p);
    this.publishPending(p);
    return promise;
  }

  /** Called by the ingest for every valid command-ack. */
  onAck(rigCode: string, ack: CommandAck): void {
    const key = `${rigCode}\u0000${ack.cmdId}`;
    const p = this.pending.get(key);
    if (!p) return; // late or repeated ack
    this.pending.delete(key);
    clearTimeout(p.timer);
    if (ack.ok) p.resolve(ack);
    else
      p.reject(
        new RigCommandError(
          `Rig ${rigCode} refused command ${ack.cmdId}: ${ack.error ?? 'no reason given'}`,
          rigCode,
          ack.cmdId,
          'refused',
          ack.error ?? 'no reason given',
        ),
      );
  }

  /** Confirm stored seqs to a rig. Not queued while offline: the rig re-sends and gets confirmed again. */
  publishStored(rigCode: string, cmd: StoredCommand): void {
    const c = this.client;
    if (!c?.connected) return;
    c.publish(topics.commands(rigCode), JSON.stringify(cmd), { qos: 1 });
  }

  /** Ask the broker to disconnect every client of a rig now (credentials revoked). */
  revoke(rigCode: string): Promise<boolean> {
    this.revokes.add(rigCode);
    return Promise.resolve(this.publishRevoke(rigCode));
  }

  private publishRevoke(rigCode: string): boolean {
    const c = this.client;
    if (!c?.connected) return false;
    c.publish(topics.revoke, JSON.stringify({ v: 1, rig: rigCode }), { qos: 1 }, (err) => {
      if (!err) this.revokes.delete(rigCode);
    });
    return true;
  }

  private publishPending(p: Pending): void {
    const c = this.client;
    if (!c?.connected) return;
    p.lastSentAt = Date.now();
    c.publish(topics.commands(p.rigCode), p.payload, { qos: 1 });
  }

  private resendDue(): void {
    if (!this.connected()) return;
    const now = Date.now();
    for (const p of this.pending.values()) if (now - p.lastSentAt >= this.resendMs) this.publishPending(p);
  }

  async stop(): Promise<void> {
    if (this.stopped) return;
    this.stopped = true;
    if (this.resendTimer) clearInterval(this.resendTimer);
    for (const p of this.pending.values()) {
      clearTimeout(p.timer);
      p.reject(new RigCommandError('The server is shutting down.', p.rigCode, p.cmdId, 'stopped'));
    }
    this.pending.clear();
    const c = this.client;
    this.client = null;
    if (c) await c.endAsync(true).catch(() => undefined);
  }
}
