/**
 * Issue #18 point 3: a live floor stream ends with its session. Real HTTP server, real open
 * event streams, real PostgreSQL sessions; the test keeps making tiles (telemetry events) after
 * the session ended and counts what still arrives.
 */
import * as http from 'node:http';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { UserEntity } from '../../server/db/entities';
import { SESSION_CHECK_MS } from '../../server/modules/floor/floor.stream';
import { TELEMETRY_LANDED } from '../../server/modules/telemetry/contracts';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';
import { insertTestRig } from '../support/db';
import type { Role } from '../../shared/roles';

let t: TestApp;
let server: http.Server;
let port = 0;
let rigId = '';
let pump: ReturnType<typeof setInterval> | null = null;

beforeAll(async () => {
  t = await createTestApp();
  rigId = await insertTestRig(t.ctx.ds, 'SS-01');
  server = http.createServer(t.app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  port = (server.address() as AddressInfo).port;
  // A tile-worthy event every 100 ms for the whole file: an open stream gets a tile every second.
  // A partial payload: the stream only reads rigId (an untyped view of the bus, as tests/api/floor.test.ts).
  const partialEvents = (): NodeJS.EventEmitter => t.ctx.events;
  pump = setInterval(() => partialEvents().emit(TELEMETRY_LANDED, { rigId, rigCode: 'SS-01' }), 100);
});

afterAll(async () => {
  if (pump) clearInterval(pump);
  server.closeAllConnections();
  await new Promise((r) => server.close(r));
  await t.close();
});

async function cookieFor(role: Role): Promise<string> {
  const res = await request(t.app)
    .post('/api/auth/sign-in')
    .send({ email: emailFor(role), password: TEST_PASSWORD });
  expect(res.status).toBe(200);
  return (res.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; ');
}

interface OpenStream {
  text: () => string;
  /** Tiles received after `mark()` was called. */
  tilesSinceMark: () => number;
  mark: () => void;
  ended: Promise<number>;
  res: http.IncomingMessage;
}

/** Open a stream with this cookie; `ended` resolves with the time the server ended it. */
async function openStream(cookie: string): Promise<OpenStream> {
  const res = await new Promise<http.IncomingMessage>((resolve, reject) => {
    const req = http.get(
      { host: '127.0.0.1', port, path: '/api/floor/stream', headers: { Accept: 'text/event-stream', Cookie: cookie } },
      resolve,
    );
    req.on('error', reject);
  });
  expect(res.statusCode).toBe(200);
  let text = '';
  let markAt = 0;
  res.setEncoding('utf8');
  res.on('data', (chunk: string) => (text += chunk));
  const ended = new Promise<number>((resolve) => res.on('end', () => resolve(Date.now())));
  const count = (s: string) => s.split('event: tile').length - 1;
  return { text: () => text, mark: () => (markAt = text.length), tilesSinceMark: () => count(text.slice(markAt)), ended, res };
}

const within = <T>(p: Promise<T>, ms: number) => Promise.race([p, new Promise<'still open'>((r) => setTimeout(() => r('still open'), ms))]);

async function waitForTile(s: OpenStream): Promise<void> {
  const t0 = Date.now();
  while (!s.text().includes('event: tile') && Date.now() - t0 < 3000) await new Promise((r) => setTimeout(r, 20));
  expect(s.text()).toContain('event: tile');
}

test('sign-out ends that session’s open stream at once; another user’s stream goes on', async () => {
  const operator = await cookieFor('operator');
  const engineer = await cookieFor('engineer');
  const mine = await openStream(operator);
  const theirs = await openStream(engineer);
  await waitForTile(mine);
  await waitForTile(theirs);

  const out = await request(t.app).post('/api/auth/sign-out').set('Cookie', operator);
  expect(out.status).toBe(204);
  const t0 = Date.now();
  const endedAt = await within(mine.ended, 1500);
  expect(endedAt).not.toBe('still open');
  expect((endedAt as number) - t0).toBeLessThan(1000);
  expect(mine.text()).toContain('event: end');
  expect(mine.text()).toContain('"reason":"signed out"');

  // The other session's stream keeps delivering.
  theirs.mark();
  await new Promise((r) => setTimeout(r, 2500));
  expect(theirs.tilesSinceMark()).toBeGreaterThanOrEqual(1);
  theirs.res.destroy();
});

test('deactivating the user ends their open stream within one session check; nothing arrives afterwards', async () => {
  const viewer = await cookieFor('manager');
  const stream = await openStream(viewer);
  await waitForTile(stream);
  const admin = await t.signIn('admin');
  const manager = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('manager') });
  const res = await admin.patch(`/api/users/${manager.id}`).send({ active: false });
  expect(res.status).toBe(200);
  const t0 = Date.now();
  const endedAt = await within(stream.ended, SESSION_CHECK_MS + 3000);
  expect(endedAt).not.toBe('still open');
  expect((endedAt as number) - t0).toBeLessThan(SESSION_CHECK_MS + 1500);
  stream.mark();
  await new Promise((r) => setTimeout(r, 1500));
  expect(stream.tilesSinceMark()).toBe(0);
  expect(stream.text()).toContain('event: end');
  // Back on, for the other tests.
  expect((await admin.patch(`/api/users/${manager.id}`).send({ active: true })).status).toBe(200);
});

test('an expired session ends its open stream', async () => {
  const viewer = await cookieFor('operator');
  const stream = await openStream(viewer);
  await waitForTile(stream);
  const sid = decodeURIComponent(viewer.split('=')[1]).replace(/^s:/, '').split('.')[0];
  const [, updated] = (await t.ctx.ds.query(`UPDATE "session" SET expire = now() - interval '1 second' WHERE sid = $1`, [sid])) as [
    unknown,
    number,
  ];
  expect(updated).toBe(1);
  const endedAt = await within(stream.ended, SESSION_CHECK_MS + 3000);
  expect(endedAt).not.toBe('still open');
  expect(stream.text()).toContain('"reason":"session ended"');
});
