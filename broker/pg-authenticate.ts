/**
 * Production authenticator: the privileged server client from environment credentials, rigs from
 * the `rigs` table (bcryptjs hash of the MQTT secret). Every CONNECT reads the row again, so a
 * revocation (credentials_revoked_at set) or a new secret applies to the very next connect.
 */
import crypto from 'node:crypto';
import bcrypt from 'bcryptjs';
import type { Pool } from 'pg';
import { isRigCode } from '../shared/mqtt';
import type { Authenticate } from './broker';

export interface PgAuthenticateOptions {
  pool: Pick<Pool, 'query'>;
  /** Privileged server client; null disables server log-in. */
  server: { username: string; password: string } | null;
  /** Successful bcrypt checks kept (see below); 0 disables. */
  verifiedCacheSize?: number;
}

interface RigRow {
  code: string;
  mqtt_secret_hash: string;
  credentials_revoked_at: Date | null;
  active: boolean;
}

const sha256 = (s: string) => crypto.createHash('sha256').update(s).digest();

function safeEqual(a: string, b: string): boolean {
  return crypto.timingSafeEqual(sha256(a), sha256(b));
}

export function createPgAuthenticate(opts: PgAuthenticateOptions): Authenticate {
  // bcrypt is deliberately slow (~0.1 s in pure JS); after a broker restart every rig reconnects
  // at once. We remember only *successful* checks keyed by (user, password, stored hash): the row
  // is still read on every connect, so revocation and secret rotation are never delayed.
  const cacheSize = opts.verifiedCacheSize ?? 1000;
  const verified = new Map<string, true>();
  const remember = (key: string) => {
    if (cacheSize <= 0) return;
    verified.delete(key);
    verified.set(key, true);
    if (verified.size > cacheSize) verified.delete(verified.keys().next().value as string);
  };

  return async (username, password) => {
    if (!username || !password) return null;
    if (opts.server && safeEqual(username, opts.server.username)) {
      return safeEqual(password, opts.server.password) ? { kind: 'server' } : null;
    }
    const { rows } = await opts.pool.query<RigRow>(
      'SELECT code, mqtt_secret_hash, credentials_revoked_at, active FROM rigs WHERE mqtt_username = $1 LIMIT 1',
      [username],
    );
    const row = rows[0];
    if (!row || row.credentials_revoked_at !== null || row.active === false || !isRigCode(row.code)) return null;
    const key = sha256(`${username}\0${password}\0${row.mqtt_secret_hash}`).toString('hex');
    if (!verified.has(key)) {
      if (!(await bcrypt.compare(password, row.mqtt_secret_hash))) return null;
      remember(key);
    }
    return { kind: 'rig', rigCode: row.code };
  };
}
