/**
 * Issue #18, point 1: no default secrets. The session secret, the broker's server-account password
 * and the database password come from the environment or from a generated owner-only file; the
 * real broker and API processes read the same file and agree; neither starts on a non-loopback
 * address with a built-in value; a demo cluster made before the file follows its password.
 */
import { createHmac } from 'node:crypto';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import bcrypt from 'bcryptjs';
import mqtt from 'mqtt';
import { Client } from 'pg';
import { destroyCluster } from '../../scripts/pg-cluster';
import { UserEntity } from '../../server/db/entities';
import { SESSION_COOKIE } from '../../server/http/route';
import { LOOPBACK_ONLY_SECRETS, MIN_SECRET_LENGTH, refuseWeakSecretsOffLoopback, withSecrets } from '../../server/secrets';
import { createTestDb, type TestDb } from '../support/db';
import {
  freePort,
  pgClusterAsync,
  spawnTs,
  stackEnv,
  startApiProcess,
  startBrokerProcess,
  stopAllProcesses,
  type NodeProcess,
} from '../support/processes';

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'emberlot-secrets-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));
const modeOf = (f: string) => fs.statSync(f).mode & 0o777;
const GENERATED = /^[A-Za-z0-9_-]{43}$/; // 32 random bytes in base64url

describe('withSecrets: the environment first, else a generated owner-only file', () => {
  it('generates all three on first use (mode 600, 256 bits each) and reads the same ones after', () => {
    const file = path.join(tmp, 'first', 'secrets.json');
    const a = withSecrets({ EMBERLOT_SECRETS_FILE: file });
    expect(a.generated.sort()).toEqual(['dbPassword', 'mqttServerPassword', 'sessionSecret']);
    expect(modeOf(file)).toBe(0o600);
    for (const k of ['EMBERLOT_SESSION_SECRET', 'EMBERLOT_MQTT_SERVER_PASSWORD', 'EMBERLOT_DB_PASSWORD'])
      expect(a.env[k]).toMatch(GENERATED);
    expect(new Set([a.env.EMBERLOT_SESSION_SECRET, a.env.EMBERLOT_MQTT_SERVER_PASSWORD, a.env.EMBERLOT_DB_PASSWORD]).size).toBe(3);
    const b = withSecrets({ EMBERLOT_SECRETS_FILE: file });
    expect(b.generated).toEqual([]);
    expect(b.fromFile.sort()).toEqual(['dbPassword', 'mqttServerPassword', 'sessionSecret']);
    expect(b.env).toEqual(a.env);
  });

  it('a value in the environment wins; with all three given, no file is made', () => {
    const file = path.join(tmp, 'env', 'secrets.json');
    const given = {
      EMBERLOT_SESSION_SECRET: 's'.repeat(40),
      EMBERLOT_MQTT_SERVER_PASSWORD: 'm'.repeat(40),
      EMBERLOT_DB_PASSWORD: 'd'.repeat(40),
    };
    const all = withSecrets({ ...given, EMBERLOT_SECRETS_FILE: file });
    expect(all.fromEnv.length).toBe(3);
    expect(fs.existsSync(file)).toBe(false);
    const one = withSecrets({ EMBERLOT_DB_PASSWORD: 'd'.repeat(40), EMBERLOT_SECRETS_FILE: file });
    expect(one.env.EMBERLOT_DB_PASSWORD).toBe('d'.repeat(40));
    expect(one.env.EMBERLOT_SESSION_SECRET).toMatch(GENERATED);
  });

  it('a secrets file readable by others is set back to 600', () => {
    const file = path.join(tmp, 'loose', 'secrets.json');
    withSecrets({ EMBERLOT_SECRETS_FILE: file });
    fs.chmodSync(file, 0o644);
    const warn = jest.spyOn(console, 'warn').mockImplementation(() => undefined);
    try {
      withSecrets({ EMBERLOT_SECRETS_FILE: file });
      expect(warn).toHaveBeenCalledWith(expect.stringMatching(/was readable by others \(mode 644\); set to 600/));
    } finally {
      warn.mockRestore();
    }
    expect(modeOf(file)).toBe(0o600);
  });

  it('off loopback a built-in or short secret is refused, naming the variable and never the value; on loopback it is allowed', () => {
    const builtIn = { ...LOOPBACK_ONLY_SECRETS };
    for (const host of ['127.0.0.1', 'localhost', '::1', '[::1]', '127.0.0.2'])
      expect(() => refuseWeakSecretsOffLoopback('the API', host, builtIn)).not.toThrow();
    let message = '';
    try {
      refuseWeakSecretsOffLoopback('the API', '0.0.0.0', {
        sessionSecret: builtIn.sessionSecret,
        mqttServerPassword: 'x'.repeat(43),
        dbPassword: 'short-pw',
      });
    } catch (e) {
      message = (e as Error).message;
    }
    expect(message).toMatch(
      /^Refusing to start the API on 0\.0\.0\.0: EMBERLOT_SESSION_SECRET, EMBERLOT_DB_PASSWORD are built into the source or shorter than 16 characters\./,
    );
    expect(message).not.toContain(builtIn.sessionSecret);
    expect(message).not.toContain('short-pw');
    expect(MIN_SECRET_LENGTH).toBe(16);
    expect(() =>
      refuseWeakSecretsOffLoopback('the API', '10.1.2.3', {
        sessionSecret: 'x'.repeat(43),
        mqttServerPassword: 'y'.repeat(43),
        dbPassword: 'z'.repeat(43),
      }),
    ).not.toThrow();
  });
});

describe('the real broker and API processes', () => {
  let db: TestDb;
  let env: Record<string, string | undefined>;
  let api: NodeProcess;
  const file = path.join(tmp, 'stack', 'secrets.json');
  let ports: { api: number; mqtt: number; smtp: number };

  beforeAll(async () => {
    db = await createTestDb();
    ports = { api: await freePort(), mqtt: await freePort(), smtp: await freePort() };
    // No session secret and no server-account password in the environment: both come from the file.
    env = stackEnv(db.config, ports, { EMBERLOT_SECRETS_FILE: file, EMBERLOT_MQTT_SERVER_PASSWORD: '', EMBERLOT_SESSION_SECRET: '' });
    await db.ds
      .getRepository(UserEntity)
      .insert({ email: 'admin@secrets.example', name: 'Admin', role: 'admin', passwordHash: await bcrypt.hash('a-long-password-1', 4) });
    await startBrokerProcess(env);
    api = await startApiProcess(env);
  }, 120_000);
  afterAll(async () => {
    await stopAllProcesses();
    await db?.drop();
  });

  it('they generate one owner-only file and agree on it: the API signs in to the broker with the generated password', async () => {
    expect(modeOf(file)).toBe(0o600);
    const secrets = JSON.parse(fs.readFileSync(file, 'utf8'));
    expect(secrets.sessionSecret).toMatch(GENERATED);
    expect(secrets.mqttServerPassword).toMatch(GENERATED);
    await api.waitForLine(/\[mqtt\] connected to mqtt:\/\/127\.0\.0\.1:/, 30_000);
  });

  it('the broker takes the generated server password and refuses the old built-in one', async () => {
    const { mqttServerPassword } = JSON.parse(fs.readFileSync(file, 'utf8'));
    const tryConnect = (password: string) =>
      new Promise<string>((resolve) => {
        const c = mqtt.connect(`mqtt://127.0.0.1:${ports.mqtt}`, {
          clientId: `emberlot-server-probe-${Math.random()}`,
          username: 'emberlot-server',
          password,
          reconnectPeriod: 0,
          connectTimeout: 10_000,
        });
        c.once('connect', () => c.end(true, () => resolve('connected')));
        c.once('error', (e) => c.end(true, () => resolve(`refused: ${e.message}`)));
      });
    expect(await tryConnect(mqttServerPassword)).toBe('connected');
    expect(await tryConnect(LOOPBACK_ONLY_SECRETS.mqttServerPassword)).toMatch(/^refused: .*(Not authorized|Bad user ?name or password)/i);
  });

  it('the API signs its session cookie with the generated session secret', async () => {
    const res = await fetch(`http://127.0.0.1:${ports.api}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email: 'admin@secrets.example', password: 'a-long-password-1' }),
    });
    expect(res.status).toBe(200);
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith(`${SESSION_COOKIE}=`))!;
    const value = decodeURIComponent(cookie.split(';')[0].slice(SESSION_COOKIE.length + 1));
    const [, sid, sig] = /^s:([^.]+)\.(.+)$/.exec(value)!;
    const { sessionSecret } = JSON.parse(fs.readFileSync(file, 'utf8'));
    // express-session signs with cookie-signature: HMAC-SHA256, base64 without padding.
    const hmac = (secret: string) => createHmac('sha256', secret).update(sid).digest('base64').replace(/=+$/, '');
    expect(sig).toBe(hmac(sessionSecret));
    expect(sig).not.toBe(hmac(LOOPBACK_ONLY_SECRETS.sessionSecret));
  });

  /** Wait up to 60 s for the process to end by itself (today's code would listen instead). */
  const exitOf = async (p: NodeProcess) => {
    for (const until = Date.now() + 60_000; p.running && Date.now() < until;) await new Promise((r) => setTimeout(r, 100));
    return p.kill('SIGTERM'); // the exit it already had, or ends one that kept running
  };

  it('the API refuses to listen on 0.0.0.0 with the built-in session secret, with a clear message', async () => {
    const p = spawnTs('api-public', 'server/main.ts', {
      ...env,
      EMBERLOT_HOST: '0.0.0.0',
      EMBERLOT_PORT: String(await freePort()),
      EMBERLOT_SESSION_SECRET: LOOPBACK_ONLY_SECRETS.sessionSecret,
    });
    const { code } = await exitOf(p);
    // The test cluster runs with the built-in database password, so that one is named too.
    expect(p.output()).toMatch(
      /\[api\] failed to start: Refusing to start the API on 0\.0\.0\.0: EMBERLOT_SESSION_SECRET, EMBERLOT_DB_PASSWORD are built into the source or shorter than 16 characters\. Set strong values in the environment/,
    );
    expect(p.output()).not.toMatch(/\bat main \(/); // a message, not a stack trace
    expect(p.output()).not.toMatch(/listening on/);
    expect(code).toBe(1);
  }, 90_000);

  it('the broker refuses to listen on 0.0.0.0 with the built-in server-account password', async () => {
    const p = spawnTs('broker-public', 'broker/main.ts', {
      ...env,
      EMBERLOT_MQTT_HOST: '0.0.0.0',
      EMBERLOT_MQTT_PORT: String(await freePort()),
      EMBERLOT_MQTT_SERVER_PASSWORD: LOOPBACK_ONLY_SECRETS.mqttServerPassword,
    });
    const { code } = await exitOf(p);
    expect(p.output()).toMatch(
      /\[broker\] failed to start: Refusing to start the MQTT broker on 0\.0\.0\.0: EMBERLOT_MQTT_SERVER_PASSWORD, EMBERLOT_DB_PASSWORD are built into the source/,
    );
    expect(p.output()).not.toMatch(/listening on/);
    expect(code).toBe(1);
  }, 90_000);
});

describe('a cluster made before the secrets file follows the generated password', () => {
  let port = 0;
  const name = `secrets-${process.pid}`;
  afterAll(() => {
    if (port) destroyCluster({ name, port, quiet: true });
  });

  it('startCluster with a password sets it on an existing cluster: the new one works, the built-in one no longer does', async () => {
    port = await freePort();
    await pgClusterAsync('start', { name, port, fast: true }); // made with the built-in password, as before
    const connect = async (password: string) => {
      const c = new Client({ host: '127.0.0.1', port, user: 'emberlot', password, database: 'postgres' });
      try {
        await c.connect();
        return 'ok';
      } catch (e) {
        return (e as { code?: string }).code ?? String(e);
      } finally {
        await c.end().catch(() => undefined);
      }
    };
    expect(await connect(LOOPBACK_ONLY_SECRETS.dbPassword)).toBe('ok');
    const generated = withSecrets({ EMBERLOT_SECRETS_FILE: path.join(tmp, 'cluster', 'secrets.json') }).env.EMBERLOT_DB_PASSWORD!;
    await pgClusterAsync('start', { name, port, fast: true, password: generated });
    expect(await connect(generated)).toBe('ok');
    expect(await connect(LOOPBACK_ONLY_SECRETS.dbPassword)).toBe('28P01'); // invalid_password
  }, 120_000);
});
