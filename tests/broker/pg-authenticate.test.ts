/** Rig/server authentication against the `rigs` table (a stub pool with the same SQL shape). */
import bcrypt from 'bcryptjs';
import { createPgAuthenticate } from '../../broker/pg-authenticate';

interface Row {
  code: string;
  mqtt_username: string;
  mqtt_secret_hash: string;
  credentials_revoked_at: Date | null;
  active: boolean;
}

function stubPool(rows: Row[]) {
  const calls: unknown[][] = [];
  return {
    calls,
    pool: {
      query: async (_sql: string, params: unknown[]) => {
        calls.push(params);
        return { rows: rows.filter((r) => r.mqtt_username === params[0]) };
      },
    } as never,
  };
}

const hash = (s: string) => bcrypt.hashSync(s, 4); // low cost: tests only

describe('createPgAuthenticate', () => {
  const row: Row = {
    code: 'OV-07',
    mqtt_username: 'rig-OV-07',
    mqtt_secret_hash: hash('s3cret-ov07'),
    credentials_revoked_at: null,
    active: true,
  };

  test('a rig with its secret gets a rig principal; a wrong secret or unknown user gets null', async () => {
    const { pool } = stubPool([row]);
    const auth = createPgAuthenticate({ pool, server: { username: 'emberlot-server', password: 'srv' } });
    await expect(auth('rig-OV-07', 's3cret-ov07')).resolves.toEqual({ kind: 'rig', rigCode: 'OV-07' });
    await expect(auth('rig-OV-07', 'nope')).resolves.toBeNull();
    await expect(auth('rig-OV-99', 's3cret-ov07')).resolves.toBeNull();
    await expect(auth('', '')).resolves.toBeNull();
  });

  test('the server user is checked against its own credentials, never the table', async () => {
    const { pool, calls } = stubPool([row]);
    const auth = createPgAuthenticate({ pool, server: { username: 'emberlot-server', password: 'srv' } });
    await expect(auth('emberlot-server', 'srv')).resolves.toEqual({ kind: 'server' });
    await expect(auth('emberlot-server', 'guess')).resolves.toBeNull();
    expect(calls).toHaveLength(0);
  });

  test('revocation, deactivation and a new secret apply to the very next connect', async () => {
    const live = { ...row };
    const { pool, calls } = stubPool([live]);
    const auth = createPgAuthenticate({ pool, server: null });
    await expect(auth('rig-OV-07', 's3cret-ov07')).resolves.not.toBeNull();
    await expect(auth('rig-OV-07', 's3cret-ov07')).resolves.not.toBeNull(); // memoised bcrypt check
    live.credentials_revoked_at = new Date();
    await expect(auth('rig-OV-07', 's3cret-ov07')).resolves.toBeNull();
    live.credentials_revoked_at = null;
    live.active = false;
    await expect(auth('rig-OV-07', 's3cret-ov07')).resolves.toBeNull();
    live.active = true;
    live.mqtt_secret_hash = hash('rotated');
    await expect(auth('rig-OV-07', 's3cret-ov07')).resolves.toBeNull();
    await expect(auth('rig-OV-07', 'rotated')).resolves.toEqual({ kind: 'rig', rigCode: 'OV-07' });
    expect(calls).toHaveLength(6); // the row is read on every connect
  });

  test('with no server credentials configured, nobody logs in as the server', async () => {
    const { pool } = stubPool([]);
    const auth = createPgAuthenticate({ pool, server: null });
    await expect(auth('emberlot-server', 'srv')).resolves.toBeNull();
  });
});
