/**
 * The broker's optional Redis mode: several aedes instances (on different ports or machines) share
 * subscriptions, retained messages, QoS 1 in-flight and offline messages and last wills through one
 * Redis — the aedes project's `mqemitter-redis` (messages between brokers) and
 * `aedes-persistence-redis` (state). Without it (the default, `npm start`) aedes keeps everything
 * in memory.
 *
 * One fix of our own on top: a broker that dies (process killed) leaves its clients' last wills in
 * Redis, and a surviving broker publishes them once it has missed the dead one's heartbeats — by
 * then the rig has long reconnected to the survivor and said `online`, so its retained status would
 * turn `offline` under it. Each broker therefore records in Redis which broker a client id is
 * connected to, and a will of a client now connected through another broker is dropped as stale
 * instead of published.
 */
import type { Aedes as AedesBroker, AedesOptions } from 'aedes';
import Redis from 'ioredis';

// Both are CommonJS factories without type declarations.
// eslint-disable-next-line @typescript-eslint/no-require-imports -- see above
const mqemitterRedis = require('mqemitter-redis') as (opts: { connectionString: string }) => NonNullable<AedesOptions['mq']>;
// eslint-disable-next-line @typescript-eslint/no-require-imports -- see above
const persistenceRedis = require('aedes-persistence-redis') as (opts: { conn: Redis }) => WillPersistence;

export interface BrokerRedisOptions {
  /** redis://host:port[/db] */
  url: string;
  /**
   * How often a broker announces itself (aedes `heartbeatInterval`, default here 2000 ms). A broker
   * silent for 3 intervals counts as dead; its clients' wills are published within 4 more.
   */
  heartbeatIntervalMs?: number;
}

interface StoredWill {
  clientId: string;
  brokerId: string;
}

/** The part of the callback persistence this file touches (it is untyped). */
interface WillPersistence {
  streamWill(brokers: Record<string, number>): AsyncIterable<StoredWill>;
  delWill(client: { id: string; brokerId: string }): Promise<unknown>;
  addSubscriptions(client: { id: string }, subs: Array<{ topic: string; qos: number }>, cb?: (...args: unknown[]) => void): unknown;
}

const CONNECTED_KEY = (clientId: string) => `emberlot:mqtt:connected:${encodeURIComponent(clientId)}`;
/** A registry entry outlives a client that never comes back only this long. */
const CONNECTED_TTL_S = 7 * 24 * 3600;
const DELETE_IF_OURS = `if redis.call('get', KEYS[1]) == ARGV[1] then return redis.call('del', KEYS[1]) else return 0 end`;

export interface RedisMode {
  /** aedes options to merge in before createBroker. */
  aedesOptions: Pick<AedesOptions, 'mq' | 'persistence' | 'heartbeatInterval'>;
  /** Hook the registry onto the created broker. */
  attach(broker: AedesBroker): void;
  /** Stale wills dropped so far (counter). */
  readonly staleWillsDropped: number;
  /** Close the Redis connections (after the broker is closed). */
  close(): Promise<void>;
}

export function createRedisMode(opts: BrokerRedisOptions, log: (line: string) => void): RedisMode {
  const registry = new Redis(opts.url, { maxRetriesPerRequest: null, lazyConnect: false });
  registry.on('error', (err) => log(`redis registry: ${err.message}`));
  const persistenceConn = new Redis(opts.url, { maxRetriesPerRequest: null });
  persistenceConn.on('error', (err) => log(`redis persistence: ${err.message}`));
  const persistence = persistenceRedis({ conn: persistenceConn });
  const mq = mqemitterRedis({ connectionString: opts.url });
  let dropped = 0;

  const streamWill = persistence.streamWill.bind(persistence);
  persistence.streamWill = (brokers) =>
    (async function* () {
      for await (const will of streamWill(brokers)) {
        const now = await registry.get(CONNECTED_KEY(will.clientId)).catch(() => null);
        if (now && now !== will.brokerId) {
          dropped++;
          log(
            `dropped the stale last will of "${will.clientId}" (broker ${will.brokerId} is gone; the client is connected through ${now})`,
          );
          await persistence.delWill({ id: will.clientId, brokerId: will.brokerId });
          continue;
        }
        yield will;
      }
    })();

  joinRepeatedSubscriptionStores(persistence);

  return {
    aedesOptions: { mq, persistence, heartbeatInterval: opts.heartbeatIntervalMs ?? 2000 },
    attach(broker) {
      broker.on('client', (client) => {
        registry.set(CONNECTED_KEY(client.id), broker.id, 'EX', CONNECTED_TTL_S).catch(() => undefined);
      });
      broker.on('clientDisconnect', (client) => {
        registry.eval(DELETE_IF_OURS, 1, CONNECTED_KEY(client.id), broker.id).catch(() => undefined);
      });
    },
    get staleWillsDropped() {
      return dropped;
    },
    async close() {
      // QUIT lets commands still queued (the last clients' session clean-up) finish first. Not
      // persistence.destroy(): it unsubscribes through the emitter aedes has already closed, and
      // that rejection went unhandled and crashed the process on SIGTERM.
      // Clients closed just now still clean up their sessions in Redis for a moment.
      await new Promise((r) => setTimeout(r, 250));
      await Promise.all([persistenceConn.quit().catch(() => undefined), registry.quit().catch(() => undefined)]);
    },
  };
}

/**
 * aedes 1.2 stores a persistent session's SUBSCRIBE once per topic in the packet, each time with the
 * packet's whole list; aedes-persistence-redis then waits for its own `$SYS/sub/add` broadcast under
 * a key made of the client id and the list's first topic, and keeps one waiter per key. With several
 * topics in one packet only one of the stores ever finished: the SUBACK never came. It hit the
 * leader's ingest (clean: false, four topics): it never subscribed, and stored no telemetry in the
 * cluster layout with EMBERLOT_WORKERS=elect. Identical stores in flight are joined into one here
 * (tests/broker/cluster-sign-in-throttle.test.ts has the regression test).
 */
function joinRepeatedSubscriptionStores(persistence: WillPersistence): void {
  const add = persistence.addSubscriptions.bind(persistence);
  const inFlight = new Map<string, unknown>();
  persistence.addSubscriptions = (client, subs, cb) => {
    if (cb) return add(client, subs, cb); // the callback form is not the one aedes 1.x uses
    const key = `${client.id}\0${JSON.stringify(subs.map((x) => [x.topic, x.qos]))}`;
    const running = inFlight.get(key);
    if (running) return running;
    const p = Promise.resolve(add(client, subs)).finally(() => inFlight.delete(key));
    inFlight.set(key, p);
    return p;
  };
}
