/**
 * The three secrets Emberlot runs on, and where they come from (issue #18, point 1):
 *  1. the environment, when given (production: a secret store or the service manager);
 *  2. otherwise a file beside the private data, `.data/secrets.json` (mode 0600), generated on
 *     first start with 256 random bits per secret and read by every process after that: the
 *     broker, the API, the demo database (scripts/start.ts), the seed.
 * The old built-in values live on only for in-process tests and throwaway clusters on loopback;
 * nothing listens on a non-loopback address while any secret is built-in or short
 * (`refuseWeakSecretsOffLoopback`).
 */
import { randomBytes } from 'node:crypto';
import * as fs from 'node:fs';
import * as net from 'node:net';
import * as path from 'node:path';

export type Env = Record<string, string | undefined>;

/** A setting that keeps a process from starting: printed as its message alone, no stack trace. */
export class ConfigError extends Error {
  override name = 'ConfigError';
}

/** Each secret's environment variable. */
export const SECRET_ENV = {
  sessionSecret: 'EMBERLOT_SESSION_SECRET',
  mqttServerPassword: 'EMBERLOT_MQTT_SERVER_PASSWORD',
  dbPassword: 'EMBERLOT_DB_PASSWORD',
} as const;
export type SecretName = keyof typeof SECRET_ENV;
export const SECRET_NAMES = Object.keys(SECRET_ENV) as SecretName[];

/** Built into the source: fine for a test on loopback, refused anywhere else. */
export const LOOPBACK_ONLY_SECRETS: Readonly<Record<SecretName, string>> = {
  sessionSecret: 'emberlot-local-session-secret-change-me',
  mqttServerPassword: 'server-local-only',
  dbPassword: 'emberlot-local-only',
};

/** Shorter than this is refused off loopback (a generated secret has 43 characters). */
export const MIN_SECRET_LENGTH = 16;

const PROJECT_ROOT = path.resolve(__dirname, '..');

export function secretsFilePath(env: Env = process.env): string {
  if (env.EMBERLOT_SECRETS_FILE) return path.resolve(env.EMBERLOT_SECRETS_FILE);
  return path.join(env.EMBERLOT_DATA_ROOT || path.join(PROJECT_ROOT, '.data'), 'secrets.json');
}

export interface ResolvedSecrets {
  /** The input environment with every secret filled in. */
  env: Env;
  /** The secrets file (read or written only when the environment lacked a secret). */
  file: string;
  fromEnv: SecretName[];
  fromFile: SecretName[];
  /** Generated just now (first start, or a file missing one). */
  generated: SecretName[];
}

const generate = () => randomBytes(32).toString('base64url');

function readFile(file: string): Partial<Record<SecretName, string>> {
  let raw: unknown;
  try {
    raw = JSON.parse(fs.readFileSync(file, 'utf8'));
  } catch (e) {
    throw new ConfigError(
      `The secrets file ${file} cannot be read as JSON (${e instanceof Error ? e.message : e}). Fix or delete it (a new one is generated; signed-in users must sign in again).`,
    );
  }
  const out: Partial<Record<SecretName, string>> = {};
  if (raw && typeof raw === 'object') {
    for (const n of SECRET_NAMES) {
      const v = (raw as Record<string, unknown>)[n];
      if (typeof v === 'string' && v) out[n] = v;
    }
  }
  return out;
}

/** Write all of `values` to `file`, mode 0600, whole or not at all. `exclusive`: only when no file exists yet. */
function writeFile(file: string, values: Record<SecretName, string>, exclusive: boolean): boolean {
  const tmp = `${file}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`;
  const body =
    JSON.stringify(
      {
        ...values,
        note: 'Emberlot secrets, generated on first start. Keep private (mode 0600); environment variables of the same purpose take precedence.',
      },
      null,
      2,
    ) + '\n';
  fs.writeFileSync(tmp, body, { mode: 0o600, flag: 'wx' });
  try {
    if (exclusive) {
      // link() fails when the file exists: two processes starting at once agree on one set.
      try {
        fs.linkSync(tmp, file);
      } catch (e) {
        if ((e as NodeJS.ErrnoException).code === 'EEXIST') return false;
        throw e;
      }
    } else fs.renameSync(tmp, file);
    return true;
  } finally {
    fs.rmSync(tmp, { force: true });
  }
}

/**
 * Every secret from the environment, else from the secrets file, generating the file (or the
 * secrets it lacks) when needed. `create: false` only reads (a file that is missing stays missing).
 */
export function withSecrets(env: Env = process.env, opts: { create?: boolean } = {}): ResolvedSecrets {
  const file = secretsFilePath(env);
  const out: ResolvedSecrets = { env: { ...env }, file, fromEnv: [], fromFile: [], generated: [] };
  const missing = SECRET_NAMES.filter((n) => {
    if (env[SECRET_ENV[n]]) {
      out.fromEnv.push(n);
      return false;
    }
    return true;
  });
  if (!missing.length) return out;

  let stored: Partial<Record<SecretName, string>> = {};
  if (fs.existsSync(file)) {
    tightenMode(file, opts.create !== false);
    stored = readFile(file);
  }
  if (missing.some((n) => !stored[n]) && opts.create !== false) {
    fs.mkdirSync(path.dirname(file), { recursive: true, mode: 0o700 });
    const existed = fs.existsSync(file);
    const full = Object.fromEntries(SECRET_NAMES.map((n) => [n, stored[n] ?? generate()])) as Record<SecretName, string>;
    if (writeFile(file, full, !existed)) {
      out.generated = SECRET_NAMES.filter((n) => !stored[n]);
      stored = full;
    } else stored = readFile(file); // another process created it a moment ago
  }
  for (const n of missing) {
    const v = stored[n];
    if (!v) continue;
    out.env[SECRET_ENV[n]] = v;
    if (!out.generated.includes(n)) out.fromFile.push(n);
  }
  return out;
}

/** A secrets file readable by others is made owner-only (and said so). */
function tightenMode(file: string, fix: boolean): void {
  const mode = fs.statSync(file).mode & 0o777;
  if ((mode & 0o077) === 0 || !fix) return;
  fs.chmodSync(file, 0o600);
  console.warn(`[secrets] ${file} was readable by others (mode ${mode.toString(8)}); set to 600.`);
}

/** 127.0.0.0/8, ::1 and `localhost`: reachable from this machine only. */
export function isLoopbackHost(host: string): boolean {
  const h = host
    .trim()
    .toLowerCase()
    .replace(/^\[(.*)\]$/, '$1');
  if (h === 'localhost') return true;
  if (net.isIPv4(h)) return h.startsWith('127.');
  if (net.isIPv6(h)) return h === '::1' || /^::ffff:127\./.test(h);
  return false;
}

/**
 * Refuses to serve on a non-loopback address while a secret is one built into the source or
 * shorter than MIN_SECRET_LENGTH: the message names the variables to set, never the values.
 */
export function refuseWeakSecretsOffLoopback(what: string, host: string, secrets: Partial<Record<SecretName, string>>): void {
  if (isLoopbackHost(host)) return;
  const weak = SECRET_NAMES.filter((n) => {
    const v = secrets[n];
    if (v === undefined) return false;
    return v === LOOPBACK_ONLY_SECRETS[n] || v.length < MIN_SECRET_LENGTH;
  });
  if (!weak.length) return;
  throw new ConfigError(
    `Refusing to start ${what} on ${host}: ${weak.map((n) => SECRET_ENV[n]).join(', ')} ${weak.length === 1 ? 'is' : 'are'} ` +
      `built into the source or shorter than ${MIN_SECRET_LENGTH} characters. Set strong values in the environment, or unset ` +
      `them so that Emberlot generates its own in ${secretsFilePath()} (README, "Production settings"). On 127.0.0.1 the built-in values are allowed.`,
  );
}
