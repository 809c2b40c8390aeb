/** Runtime settings, all from the environment with local defaults (everything on 127.0.0.1). */
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
  mqtt: { url: string; username: string; password: string };
  smtp: { host: string; port: number; from: string };
  sessionSecret: string;
  /** Secure cookies need https; off for the loopback demo unless EMBERLOT_SECURE_COOKIES=1. */
  secureCookies: boolean;
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
}

const int = (v: string | undefined, d: number) => (v && /^\d+$/.test(v) ? Number(v) : d);

export type Env = Record<string, string | undefined>;

export function dbConfigFromEnv(env: Env = process.env): DbConfig {
  return {
    host: env.EMBERLOT_DB_HOST ?? '127.0.0.1',
    port: int(env.EMBERLOT_DB_PORT ?? env.EMBERLOT_PG_PORT, 54329),
    user: env.EMBERLOT_DB_USER ?? 'emberlot',
    password: env.EMBERLOT_DB_PASSWORD ?? 'emberlot-local-only',
    database: env.EMBERLOT_DB_NAME ?? 'emberlot',
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
      password: env.EMBERLOT_MQTT_SERVER_PASSWORD ?? 'server-local-only',
    },
    smtp: {
      host: '127.0.0.1',
      port: int(env.EMBERLOT_SMTP_PORT, 2526),
      from: env.EMBERLOT_MAIL_FROM ?? 'Emberlot <emberlot@harrowgate-lab.example>',
    },
    sessionSecret: env.EMBERLOT_SESSION_SECRET ?? 'emberlot-local-session-secret-change-me',
    secureCookies: env.EMBERLOT_SECURE_COOKIES === '1',
    sessionMaxAgeMs: int(env.EMBERLOT_SESSION_MAX_AGE_MS, 12 * 3600 * 1000),
    webDir: env.EMBERLOT_WEB_DIR ?? null,
    uploadDir: env.EMBERLOT_UPLOAD_DIR ?? '.data/uploads',
    clockRate: Number(env.EMBERLOT_CLOCK_RATE ?? 1) || 1,
    rollupFlushMs: Math.max(100, int(env.EMBERLOT_ROLLUP_FLUSH_MS, 5_000)),
    ingestMaxBatch: Math.max(1, int(env.EMBERLOT_INGEST_MAX_BATCH, 200)),
    ingestInFlight: Math.max(1, int(env.EMBERLOT_INGEST_IN_FLIGHT, 2)),
  };
}
