/**
 * Emberlot's MQTT broker: aedes 1.x on a plain TCP listener, with rig/server authentication,
 * per-rig topic authorisation, a packet-size cap, immediate revocation and counters.
 * Authentication is an injected async function (PostgreSQL in production, a map in tests).
 */
import type { EventEmitter } from 'node:events';
import net from 'node:net';
import type { Aedes as AedesBroker, AedesOptions, AuthenticateError, Client, PublishPacket, Subscription } from 'aedes';
import {
  MAX_PACKET_BYTES,
  REVOKE_TOPIC,
  RIG_PUBLISH_KINDS,
  isRigClientIdFor,
  isUnderRoot,
  parseRevoke,
  parseRigTopic,
  topics,
} from '../shared/mqtt';
import { createConnackFirst } from './connack-first';
import { PacketSizeGuard } from './packet-guard';
import { createRedisMode, type BrokerRedisOptions } from './redis-mode';
import { SharedSignInThrottle, type SignInGate } from './shared-sign-in-throttle';
import { SignInThrottle, type SignInThrottleOptions, type ThrottleVerdict } from './sign-in-throttle';

// aedes 1.x is ESM-only with no default export; Node ≥ 20.19 can require() it (jest: swc transform).
// eslint-disable-next-line @typescript-eslint/no-require-imports -- see above
const { Aedes } = require('aedes') as typeof import('aedes');

export type Principal = { kind: 'rig'; rigCode: string } | { kind: 'server' };
/** Resolve MQTT credentials to a principal, or null to refuse. Throwing = "server unavailable". */
export type Authenticate = (username: string, password: string) => Promise<Principal | null>;

export interface EmberlotBrokerOptions {
  host?: string;
  /** 0 or omitted = ephemeral port (read it back from `.port`). */
  port?: number;
  authenticate: Authenticate;
  maxPacketBytes?: number;
  /** One-line log sink for refusals and kicks; default silent. */
  log?: (line: string) => void;
  /**
   * Failed sign-ins throttled per user name and client address (sign-in-throttle.ts; in Redis mode
   * counted over all brokers through that Redis, shared-sign-in-throttle.ts); false = off.
   */
  signInThrottle?: SignInThrottleOptions | false;
  /**
   * Share subscriptions, retained and QoS 1 in-flight/offline messages and wills with other broker
   * instances through this Redis (redis-mode.ts). Omitted: everything in memory (single machine).
   */
  redis?: BrokerRedisOptions;
}

export interface BrokerCounters {
  /** Refused CONNECTs: unknown user, wrong password, or a client id that is not the rig's own. */
  authFailures: number;
  /** CONNECTs refused because the authenticator threw (e.g. database down). */
  authErrors: number;
  /** CONNECTs refused unchecked: their user name or client address failed too often (CONNACK 5). */
  throttledConnects: number;
  /** PUBLISHes refused by topic rules (aedes then closes the client under MQTT 3.1.1). */
  spoofedPublishes: number;
  refusedSubscriptions: number;
  /** Connections dropped for a packet over the size cap. */
  oversized: number;
  /** Rig clients disconnected by a revocation. */
  revokedKicks: number;
  /** Rig clients connected right now. */
  readonly connectedRigs: number;
  /** Redis mode: last wills of a dead broker's clients dropped because the client reconnected elsewhere. */
  readonly staleWillsDropped: number;
  /** Live messages held back until their connection's CONNACK had gone out (connack-first.ts). */
  readonly heldBeforeConnack: number;
}

export interface EmberlotBroker {
  broker: AedesBroker;
  server: net.Server;
  port: number;
  counters: BrokerCounters;
  /** Replace the authenticator (takes effect for the next CONNECT). */
  setAuthenticate(fn: Authenticate): void;
  /** Disconnect every client of this rig now; returns how many were closed. */
  kickRig(rigCode: string): number;
  close(): Promise<void>;
}

type ClientWithPrincipal = Client & { emberlotPrincipal?: Principal };

function authError(message: string, returnCode: number): AuthenticateError {
  return Object.assign(new Error(message), { returnCode }) as AuthenticateError;
}

/** aedes keeps connected clients by id but does not declare the map in its types. */
function clientsOf(broker: AedesBroker): ClientWithPrincipal[] {
  const map = (broker as unknown as { clients: Record<string, ClientWithPrincipal> }).clients;
  return Object.values(map);
}

function principalOf(client: Client | null): Principal | undefined {
  return (client as ClientWithPrincipal | null)?.emberlotPrincipal;
}

/** Whether a principal may publish to a topic (pure; exported for tests and docs). */
export function mayPublish(principal: Principal | undefined, topic: string): boolean {
  if (!principal) return false;
  if (principal.kind === 'server') return isUnderRoot(topic);
  const parsed = parseRigTopic(topic);
  return !!parsed && parsed.rigCode === principal.rigCode && RIG_PUBLISH_KINDS.includes(parsed.kind);
}

/** Whether a principal may subscribe to a topic filter (pure). */
export function maySubscribe(principal: Principal | undefined, filter: string): boolean {
  if (!principal) return false;
  if (principal.kind === 'server') return isUnderRoot(filter);
  return filter === topics.commands(principal.rigCode);
}

export async function createEmberlotBroker(opts: EmberlotBrokerOptions): Promise<EmberlotBroker> {
  const host = opts.host ?? '127.0.0.1';
  const maxPacketBytes = opts.maxPacketBytes ?? MAX_PACKET_BYTES;
  const log = opts.log ?? (() => undefined);
  let authenticate = opts.authenticate;
  const throttleOpts = opts.signInThrottle === false ? null : (opts.signInThrottle ?? {});
  const throttle: SignInGate | null = !throttleOpts
    ? null
    : opts.redis
      ? new SharedSignInThrottle({ ...throttleOpts, url: opts.redis.url }, log)
      : new SignInThrottle(throttleOpts);

  const redisMode = opts.redis ? createRedisMode(opts.redis, log) : null;
  // No message reaches a client ahead of its CONNACK (connack-first.ts).
  const connackFirst = createConnackFirst();
  const counters = {
    authFailures: 0,
    authErrors: 0,
    throttledConnects: 0,
    spoofedPublishes: 0,
    refusedSubscriptions: 0,
    oversized: 0,
    revokedKicks: 0,
    get connectedRigs(): number {
      return clientsOf(broker).filter((c) => c.emberlotPrincipal?.kind === 'rig' && !c.closed).length;
    },
    get staleWillsDropped(): number {
      return redisMode?.staleWillsDropped ?? 0;
    },
    get heldBeforeConnack(): number {
      return connackFirst.heldDeliveries;
    },
  };

  const aedesOptions: AedesOptions = {
    ...redisMode?.aedesOptions,
    // rig-{32-char code}.{suffix} does not fit the MQTT 3.1.1 default of 23.
    maxClientsIdLength: 64,
    preConnect: connackFirst.preConnect,
    authenticate(client, username, password, done) {
      const user = username ?? '';
      const pass = password ? Buffer.from(password).toString('utf8') : '';
      const address = (client.conn as Partial<net.Socket>).remoteAddress ?? 'unknown';
      // The in-memory throttle answers at once; the shared one (Redis mode) after a Redis step.
      const verdict = throttle ? throttle.begin(user, pass, address) : null;
      if (verdict instanceof Promise)
        verdict.then(check, (err: unknown) => {
          log(`sign-in throttle failed: ${(err as Error)?.message ?? err}`);
          done(authError('Server unavailable', 3), null);
        });
      else check(verdict);
      function check(gate: ThrottleVerdict | null): void {
        if (gate && !gate.ok) {
          counters.throttledConnects++;
          log(
            `refused connect: too many failed sign-ins for ${gate.key === 'name' ? `user "${user}"` : `address ${address}`}; retry in ${Math.ceil(gate.retryAfterMs / 1000)} s`,
          );
          return done(authError('Too many failed sign-ins; try again later', 5), null);
        }
        const settle = (success: boolean) => (gate?.ok ? gate.done(success) : undefined);
        authenticate(user, pass).then(
          (principal) => {
            settle(!!principal);
            if (!principal) {
              counters.authFailures++;
              log(`refused connect: bad credentials for user "${user}"`);
              return done(authError('Bad user name or password', 4), null);
            }
            const idOk = principal.kind === 'rig' ? isRigClientIdFor(client.id, principal.rigCode) : !client.id.startsWith('rig-');
            if (!idOk) {
              counters.authFailures++;
              log(`refused connect: client id "${client.id}" not allowed for user "${user}"`);
              return done(authError('Client id not allowed for these credentials', 2), null);
            }
            (client as ClientWithPrincipal).emberlotPrincipal = principal;
            done(null, true);
          },
          (err: unknown) => {
            // Not the client's fault (e.g. database down): neither a failure nor a success.
            if (gate?.ok) gate.done(null);
            counters.authErrors++;
            log(`refused connect: authenticator failed: ${(err as Error)?.message ?? err}`);
            done(authError('Server unavailable', 3), null);
          },
        );
      }
    },
    authorizePublish(client, packet: PublishPacket, done) {
      // client null = the broker itself (e.g. wills replayed from persistence).
      if (!client) return done(null);
      const principal = principalOf(client);
      // The stream guard may already have dropped the socket while aedes was parsing the same
      // chunk: refuse that packet too, and count each oversized connection once.
      const guard = (client.conn as net.Socket & { emberlotGuard?: PacketSizeGuard }).emberlotGuard;
      const size = packet.payload ? Buffer.byteLength(packet.payload as Buffer | string) : 0;
      if (guard?.tripped || size > maxPacketBytes) {
        if (!guard?.tripped) counters.oversized++;
        return done(new Error('packet too large'));
      }
      if (!mayPublish(principal, packet.topic)) {
        counters.spoofedPublishes++;
        log(`refused publish: client "${client.id}" → ${packet.topic}`);
        return done(new Error(`publish to ${packet.topic} not allowed`));
      }
      // Only status is a retained topic; a retained telemetry or ack would replay stale data.
      if (principal?.kind === 'rig' && packet.retain && !packet.topic.endsWith('/status')) packet.retain = false;
      done(null);
    },
    authorizeSubscribe(client, sub: Subscription, done) {
      if (!maySubscribe(principalOf(client), sub.topic)) {
        counters.refusedSubscriptions++;
        log(`refused subscribe: client "${client.id}" → ${sub.topic}`);
        return done(null, null); // granted 128 (failure) for this filter
      }
      done(null, sub);
    },
  };

  const broker = await Aedes.createBroker(aedesOptions);
  connackFirst.attach(broker);
  redisMode?.attach(broker);
  // A Redis hiccup surfaces as a broker 'error' (e.g. wills it could not read): log, never crash.
  const brokerEvents: EventEmitter = broker; // 'error' is not in aedes' typed events
  brokerEvents.on('error', (err: Error) => log(`broker error: ${err.message}`));

  function kickRig(rigCode: string): number {
    let n = 0;
    for (const client of clientsOf(broker)) {
      const p = client.emberlotPrincipal;
      if (p?.kind === 'rig' && p.rigCode === rigCode) {
        client.close();
        n++;
      }
    }
    counters.revokedKicks += n;
    if (n) log(`revoked: disconnected ${n} client(s) of rig ${rigCode}`);
    return n;
  }

  // Only the server principal can publish here (mayPublish), so the message is trusted.
  await new Promise<void>((resolve) =>
    broker.subscribe(
      REVOKE_TOPIC,
      (packet, cb) => {
        const parsed = parseRevoke(packet.payload as Buffer);
        if (parsed.ok) kickRig(parsed.data.rig);
        else log(`ignored revoke message: ${parsed.reason}`);
        cb();
      },
      resolve,
    ),
  );

  const sockets = new Set<net.Socket>();
  const server = net.createServer((socket) => {
    sockets.add(socket);
    socket.on('close', () => sockets.delete(socket));
    broker.handle(socket);
    // Tap the bytes aedes reads: with a 'readable' listener present, 'data' fires only from
    // read(), so this observes without changing the flow.
    const guard = new PacketSizeGuard(maxPacketBytes);
    (socket as net.Socket & { emberlotGuard?: PacketSizeGuard }).emberlotGuard = guard;
    socket.on('data', (chunk: Buffer) => {
      if (guard.tripped) return;
      if (!guard.feed(chunk)) {
        counters.oversized++;
        log(`dropped connection: packet over ${maxPacketBytes} bytes`);
        socket.destroy();
      }
    });
  });

  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, host, () => {
      server.off('error', reject);
      resolve();
    });
  });
  const port = (server.address() as net.AddressInfo).port;

  let closing: Promise<void> | null = null;
  function close(): Promise<void> {
    closing ??= (async () => {
      await new Promise<void>((resolve) => broker.close(() => resolve()));
      for (const s of sockets) s.destroy();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await throttle?.close?.();
      await redisMode?.close();
    })();
    return closing;
  }

  return {
    broker,
    server,
    port,
    counters,
    setAuthenticate(fn) {
      authenticate = fn;
    },
    kickRig,
    close,
  };
}
