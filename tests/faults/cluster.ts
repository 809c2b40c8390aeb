/**
 * The broker cluster layout for fault tests and the bench: a private Redis (scripts/redis-server.ts),
 * two real broker processes (broker/main.ts in Redis mode) on their own loopback ports and the API
 * process (server/main.ts) whose MQTT link is given both brokers' addresses. Rigs are given the same
 * list (mqtt.js `servers`: the next address on each reconnect).
 *
 * Redis port: EMBERLOT_TEST_REDIS_PORT (tests) / EMBERLOT_BENCH_REDIS_PORT (bench) when set (parallel
 * runs on one machine choose theirs), otherwise a free ephemeral port.
 */
import type { DbConfig } from '../../server/config';
import { destroyRedis, startRedis, type RedisInfo, type RedisOptions } from '../../scripts/redis-server';
import { apiClient, freePort, stackEnv, startApiProcess, startBrokerProcess, type Env, type NodeProcess } from '../support/processes';
import type { FaultStack } from './scenario';

type Exit = { code: number | null; signal: NodeJS.Signals | null };

export interface ClusterStack extends FaultStack {
  redis: RedisInfo;
  redisOpts: RedisOptions;
  /** Both brokers, A first (every client's first address). */
  brokers: NodeProcess[];
  brokerPorts: number[];
  /** Kill broker `index` with `signal` (not restarted: the other one carries on). */
  killBroker(index: number, signal: NodeJS.Signals): Promise<Exit>;
  stopRedis(): Promise<void>;
}

/** Broker heartbeat in these stacks: a killed broker counts as dead after 3 beats (1.5 s). */
export const CLUSTER_HEARTBEAT_MS = 500;

export async function startClusterStack(db: DbConfig, opts: { redisPortEnv: string; name: string; extraEnv?: Env }): Promise<ClusterStack> {
  const fixed = Number(process.env[opts.redisPortEnv] ?? 0);
  const redisPort = fixed > 0 ? fixed : await freePort();
  const redisOpts: RedisOptions = { name: `${opts.name}-${redisPort}`, port: redisPort, throwaway: true, quiet: true };
  await destroyRedis(redisOpts);
  const redis = await startRedis(redisOpts);
  const ports = { api: await freePort(), mqtt: await freePort(), smtp: await freePort() };
  const portB = await freePort();
  const brokerPorts = [ports.mqtt, portB];
  const list = brokerPorts.map((p) => `mqtt://127.0.0.1:${p}`).join(',');
  const env = stackEnv(db, ports, {
    EMBERLOT_REDIS_URL: redis.url,
    EMBERLOT_BROKER_HEARTBEAT_MS: String(CLUSTER_HEARTBEAT_MS),
    EMBERLOT_MQTT_URL: list,
    ...opts.extraEnv,
  });
  const t0 = Date.now();
  const [a, b, api] = await Promise.all([
    startBrokerProcess({ ...env, EMBERLOT_MQTT_PORT: String(brokerPorts[0]) }),
    startBrokerProcess({ ...env, EMBERLOT_MQTT_PORT: String(brokerPorts[1]) }),
    startApiProcess(env),
  ]);
  const startupS = Math.round((Date.now() - t0) / 100) / 10;
  const refuse = () => Promise.reject(new Error('the cluster stack kills brokers; it does not restart them'));
  const stack: ClusterStack = {
    env,
    ports,
    broker: a,
    brokers: [a, b],
    brokerPorts,
    api,
    client: apiClient(`http://127.0.0.1:${ports.api}`),
    brokerUrl: list,
    startupS,
    redis,
    redisOpts,
    restartBroker: refuse,
    restartApi: async (signal, downMs) => {
      const exit = await stack.api.kill(signal);
      await new Promise((r) => setTimeout(r, downMs));
      stack.api = await startApiProcess(env);
      return exit;
    },
    killBroker: (index, signal) => stack.brokers[index].kill(signal),
    stopRedis: () => destroyRedis(redisOpts),
  };
  return stack;
}
