/**
 * Runtime settings, all from the environment with local defaults (everything on 127.0.0.1).
 * Secrets: the processes fill the environment from server/secrets.ts (`withSecrets`) before they
 * read it; the built-in fallbacks below serve in-process tests only and are refused off loopback.
 */
import * as net from 'node:net';
import { ConfigError, LOOPBACK_ONLY_SECRETS, type Env } from './secrets';
import { KEEP_AROUND_MIN, MINUTE_KEEP_DAYS, RAW_KEEP_DAYS } from '../shared/domain/telemetry-tiers';
import { parseBrokerList } from '../shared/mqtt/broker-list';

export type { Env };

export interface DbConfig {
  host: string;
  port: number;
  user: string;
  password: string;
  database: string;
}

export interface ServerConfig {
  host: string;
  port: number;
  db: DbConfig;
  /** `rigHost`/`rigPort`: where a rig's controller reaches the broker, shown beside a new secret. */
  mqtt: { url: string; username: string; password: string; rigHost: string; rigPort: number };
  smtp: { host: string; port: number; from: string };
  sessionSecret: string;
  /** Secure cookies need https; off for the loopback demo unless EMBERLOT_SECURE_COOKIES=1. */
  secureCookies: boolean;
  /** Express's `trust proxy` (EMBERLOT_TRUST_PROXY): false, a hop count, or addresses/subnets. */
  trustProxy: TrustProxy;
  /** Origins besides the request's own from which changes are accepted (EMBERLOT_PUBLIC_ORIGIN). */
  publicOrigins: string[];
  sessionMaxAgeMs: number;
  /** Folder of the exported web app served from the same origin as /api (optional). */
  webDir: string | null;
  uploadDir: string;
  /** Stress hours per wall second in demo mode (the rig simulator uses the same clock). */
  clockRate: number;
  /** How often the ingest writes the per-minute rollups it holds (telemetry/rollups.ts). */
  rollupFlushMs: number;
  /** Telemetry messages per ingest transaction, and transactions in flight (telemetry/ingest.ts). */
  ingestMaxBatch: number;
  ingestInFlight: number;
  /**
   * Telemetry tiers' windows (shared/domain/telemetry-tiers.ts): days of raw messages
   * (EMBERLOT_RAW_KEEP_DAYS), of per-minute rollups (EMBERLOT_MINUTE_KEEP_DAYS), minutes kept for
   * good around each trip, alarm and read point (EMBERLOT_KEEP_AROUND_MIN).
   */
  telemetryKeep: { rawKeepDays: number; minuteKeepDays: number; keepAroundMin: number };
  /**
   * Sign-in attempts per client address per 15 min (EMBERLOT_SIGN_IN_MAX_PER_WINDOW; default
   * SIGN_IN_MAX_PER_WINDOW in auth.routes.ts). The browser journeys sign every role in from one
   * address many times and raise it for their own stack only.
   */
  signInMaxPerWindow?: number;
}

export type TrustProxy = false | number | string[];

/** Names proxy-addr (under Express) knows for address ranges. */
const PROXY_RANGE_NAMES = new Set(['loopback', 'linklocal', 'uniquelocal']);

/**
 * EMBERLOT_TRUST_PROXY → Express's `trust proxy`. Off by default: X-Forwarded-For and
 * X-Forwarded-Proto are then ignored, so no client can pick its own address for the sign-in limit.
 * A hop count ("1": one proxy in front), or a comma list of proxy addresses, subnets
 * ("10.0.0.0/8") and range names (loopback, linklocal, uniquelocal). "true" (trust every hop) is
 * refused: any client could then claim any address.
 */
export function parseTrustProxy(value: string | undefined): TrustProxy {
  const v = (value ?? '').trim();
  if (!v || /^(0|false|off|no)$/i.test(v)) return false;
  if (/^\d+$/.test(v)) return Number(v);
  if (/^(true|yes|on|\*)$/i.test(v)) {
    throw new ConfigError(
      `EMBERLOT_TRUST_PROXY=${v} would trust X-Forwarded-For from any client, who could then pick its own address. Give the number of proxies in front of Emberlot (e.g. 1) or their addresses (e.g. loopback or 10.0.0.5).`,
    );
  }
  const items = v
    .split(',')
    .map((x) => x.trim())
    .filter(Boolean);
  for (const item of items) {
    const [addr, bits, ...rest] = item.split('/');
    const family = net.isIP(addr);
    const ok =
      PROXY_RANGE_NAMES.has(item) ||
      (family !== 0 && rest.length === 0 && (bits === undefined || (/^\d+$/.test(bits) && Number(bits) <= (family === 4 ? 32 : 128))));
    if (!ok) {
      throw new ConfigError(
        `EMBERLOT_TRUST_PROXY: "${item}" is not a proxy address, subnet (a.b.c.d/n) or one of ${[...PROXY_RANGE_NAMES].join(', ')}.`,
      );
    }
  }
  return items;
}

/** EMBERLOT_PUBLIC_ORIGIN: comma list of http(s) origins the app is reached under (behind a proxy that rewrites Host). */
export function parsePublicOrigins(value: string | undefined): string[] {
  const out: string[] = [];
  for (const item of (value ?? '')
    .split(',')
    .map((x) => x.trim())
    .filter(Boolean)) {
    let u: URL | null;
    try {
      u = new URL(item);
    } catch {
      u = null;
    }
    if (!u || (u.protocol !== 'http:' && u.protocol !== 'https:') || u.pathname !== '/' || u.search || u.hash) {
      throw new ConfigError(
        `EMBERLOT_PUBLIC_ORIGIN: "${item}" is not an origin like https://emberlot.lab.example (scheme, host and port only).`,
      );
    }
    out.push(u.origin.toLowerCase());
  }
  return out;
}

const int = (v: string | undefined, d: number) => (v && /^\d+$/.test(v) ? Number(v) : d);

export function dbConfigFromEnv(env: Env = process.env): DbConfig {
  return {
    host: env.EMBERLOT_DB_HOST ?? '127.0.0.1',
    port: int(env.EMBERLOT_DB_PORT ?? env.EMBERLOT_PG_PORT, 54329),
    user: env.EMBERLOT_DB_USER ?? 'emberlot',
    password: env.EMBERLOT_DB_PASSWORD || LOOPBACK_ONLY_SECRETS.dbPassword,
    database: env.EMBERLOT_DB_NAME ?? 'emberlot',
  };
}

/**
 * The broker address rigs use: EMBERLOT_MQTT_RIG_HOST / EMBERLOT_MQTT_RIG_PORT when the lab network
 * reaches the broker under another name, else the host and port of the server's own broker URL.
 */
function rigBrokerAddress(env: Env): { rigHost: string; rigPort: number } {
  // A list of brokers (cluster layout): rigs are told the first; set EMBERLOT_MQTT_RIG_HOST for the balancer.
  const url = new URL(parseBrokerList(env.EMBERLOT_MQTT_URL ?? `mqtt://127.0.0.1:${int(env.EMBERLOT_MQTT_PORT, 18830)}`).url);
  return {
    rigHost: env.EMBERLOT_MQTT_RIG_HOST || url.hostname,
    rigPort: int(env.EMBERLOT_MQTT_RIG_PORT, url.port ? Number(url.port) : 1883),
  };
}

export function configFromEnv(env: Env = process.env): ServerConfig {
  return {
    host: env.EMBERLOT_HOST ?? '127.0.0.1',
    port: int(env.EMBERLOT_PORT, 4780),
    db: dbConfigFromEnv(env),
    mqtt: {
      url: env.EMBERLOT_MQTT_URL ?? `mqtt://127.0.0.1:${int(env.EMBERLOT_MQTT_PORT, 18830)}`,
      username: env.EMBERLOT_MQTT_SERVER_USER ?? 'emberlot-server',
      password: env.EMBERLOT_MQTT_SERVER_PASSWORD || LOOPBACK_ONLY_SECRETS.mqttServerPassword,
      ...rigBrokerAddress(env),
    },
    smtp: {
      host: '127.0.0.1',
      port: int(env.EMBERLOT_SMTP_PORT, 2526),
      from: env.EMBERLOT_MAIL_FROM ?? 'Emberlot <emberlot@harrowgate-lab.example>',
    },
    sessionSecret: env.EMBERLOT_SESSION_SECRET || LOOPBACK_ONLY_SECRETS.sessionSecret,
    secureCookies: env.EMBERLOT_SECURE_COOKIES === '1',
    trustProxy: parseTrustProxy(env.EMBERLOT_TRUST_PROXY),
    publicOrigins: parsePublicOrigins(env.EMBERLOT_PUBLIC_ORIGIN),
    sessionMaxAgeMs: int(env.EMBERLOT_SESSION_MAX_AGE_MS, 12 * 3600 * 1000),
    webDir: env.EMBERLOT_WEB_DIR ?? null,
    uploadDir: env.EMBERLOT_UPLOAD_DIR ?? '.data/uploads',
    clockRate: Number(env.EMBERLOT_CLOCK_RATE ?? 1) || 1,
    rollupFlushMs: Math.max(100, int(env.EMBERLOT_ROLLUP_FLUSH_MS, 5_000)),
    ingestMaxBatch: Math.max(1, int(env.EMBERLOT_INGEST_MAX_BATCH, 200)),
    ingestInFlight: Math.max(1, int(env.EMBERLOT_INGEST_IN_FLIGHT, 2)),
    telemetryKeep: {
      rawKeepDays: Math.max(1, int(env.EMBERLOT_RAW_KEEP_DAYS, RAW_KEEP_DAYS)),
      minuteKeepDays: Math.max(1, int(env.EMBERLOT_MINUTE_KEEP_DAYS, MINUTE_KEEP_DAYS)),
      keepAroundMin: Math.max(0, int(env.EMBERLOT_KEEP_AROUND_MIN, KEEP_AROUND_MIN)),
    },
    ...(env.EMBERLOT_SIGN_IN_MAX_PER_WINDOW ? { signInMaxPerWindow: Math.max(1, int(env.EMBERLOT_SIGN_IN_MAX_PER_WINDOW, 30)) } : {}),
  };
}
