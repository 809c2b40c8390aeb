import { randomUUID } from 'node:crypto';
import * as http from 'node:http';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import type { EntityManager } from 'typeorm';
import { telemetryFromReadings, type SocketReading, type Telemetry } from '../../shared/mqtt';
import type { FloorTile } from '../../shared/schemas/floor';
import { AlarmEntity, RunSocketEntity } from '../../server/db/entities';
import { ALARM_EVENT } from '../../server/modules/alarms/alarms.service';
import { RUN_EVENT } from '../../server/modules/runs/run-events';
import { TELEMETRY_LANDED } from '../../server/modules/telemetry/contracts';
import { pgPoolOf } from '../../server/modules/telemetry/telemetry.feature';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';
import { insertPoweredLifeRun, storeAsIngest } from '../support/telemetry-rows';

/**
 * The floor reads only the rig id of these events: the tests emit partial payloads through an
 * untyped view of the bus (the typed one, server/events.ts, rightly refuses them).
 */
const partialEvents = (): NodeJS.EventEmitter => t.ctx.events;

let t: TestApp;
let rigA = '';
const T0 = Date.UTC(2031, 0, 10, 8, 0, 0);
const SOCKETS = 16;

function message(seq: number, atMs: number, sockets: number[], mod: (i: number) => Partial<SocketReading> = () => ({})): Telemetry {
  return telemetryFromReadings({
    v: 1,
    rig: 'OV-81',
    seq,
    ts: new Date(atMs).toISOString(),
    stressClockS: seq * 3600,
    chamberC: 150 + (seq % 10) * 0.1,
    humidityPct: null,
    setpointC: 150,
    sockets: sockets.map((i) => ({ i, caseC: 152 + i + (seq % 4) * 0.5, vV: 40, iA: 0.1, biasOn: true, tripped: false, ...mod(i) })),
  });
}

async function makeFixtures(m: EntityManager) {
  const {
    rigs: [a],
    run,
  } = await insertPoweredLifeRun(m, {
    rigCodes: ['OV-81', 'OV-82'],
    sockets: SOCKETS,
    chamberC: 150,
    lotCode: 'HPD-L9901',
    devices: 10,
    runCode: 'HTOL-F-01',
    startedAt: new Date(T0 - 200 * 3600_000),
  });
  await m.update(
    RunSocketEntity,
    { runId: run.id, socketIndex: 3 },
    { tripped: true, trippedAt: new Date(), tripReason: 'Case above runaway limit' },
  );
  const alarm = (ack: boolean) =>
    m.create(AlarmEntity, {
      kind: 'runaway-warning',
      severity: 'warning',
      rigId: a.id,
      title: 'Socket warming',
      message: 'test',
      dedupeKey: randomUUID(),
      acknowledgedAt: ack ? new Date() : null,
    });
  await m.save([alarm(false), alarm(false), alarm(true)]);
  return a.id;
}

beforeAll(async () => {
  t = await createTestApp();
  rigA = await t.ctx.ds.transaction(makeFixtures);
  // 20 minutes of telemetry at 1 message/s through the real ingest store (samples + rollups).
  const all = Array.from({ length: 1200 }, (_, k) =>
    message(
      k + 1,
      T0 + k * 1000,
      Array.from({ length: 10 }, (_, i) => i),
      (i) => (i === 9 && k === 1199 ? { tripped: true, biasOn: false } : {}),
    ),
  );
  // As the ingest does it: each committed batch folded into the accumulator, the held rollups
  // written by a later transaction (here one of their own).
  await storeAsIngest(pgPoolOf(t.ctx), 'OV-81', all, 200);
});
afterAll(async () => {
  await t.close();
});

describe('GET /api/floor', () => {
  it('one tile per rig from the seeded rows', async () => {
    const res = await (await t.signIn('operator')).get('/api/floor');
    expect(res.status).toBe(200);
    const [a, b]: FloorTile[] = res.body.items;
    expect(a).toMatchObject({
      code: 'OV-81',
      online: true,
      socketCount: SOCKETS,
      setpointC: 150,
      powered: 9, // sockets 0–8 biased; 9 tripped in the newest message
      tripped: 2, // 9 from telemetry, 3 latched by the run
      empty: 6, // 10 devices loaded on 16 sockets
      openAlarms: 2,
      lastSampleAt: new Date(T0 + 1199_000).toISOString(),
    });
    expect(a.chamberC).toBe(150); // seq 1200: 150 + (1200 % 10) × 0.1
    expect(a.maxCaseC).toBe(152 + 9); // socket 9, seq 1200 % 4 = 0
    expect(a.run).toMatchObject({ code: 'HTOL-F-01', state: 'stressing', stressHours: 150, nextReadPointH: 168, hoursToNextReadPoint: 18 });
    expect(Date.parse(a.run!.nextReadPointEta!)).toBeGreaterThan(Date.now());
    expect(b).toMatchObject({
      code: 'OV-82',
      online: false,
      powered: 0,
      tripped: 0,
      empty: SOCKETS,
      openAlarms: 0,
      run: null,
      chamberC: null,
      lastSampleAt: null,
    });
  });

  it('a socket tripped in the newest message and latched by the run counts once', async () => {
    const m = t.ctx.ds.manager;
    const [tile]: FloorTile[] = (await (await t.signIn('operator')).get('/api/floor')).body.items;
    await m.update(
      RunSocketEntity,
      { runId: tile.run!.id, socketIndex: 9 },
      { tripped: true, trippedAt: new Date(), tripReason: 'Case above runaway limit' },
    );
    try {
      const [again]: FloorTile[] = (await (await t.signIn('operator')).get('/api/floor')).body.items;
      expect(again).toMatchObject({ code: 'OV-81', tripped: 2, powered: 9, empty: 6 }); // sockets 3 and 9, as before
    } finally {
      await m.update(RunSocketEntity, { runId: tile.run!.id, socketIndex: 9 }, { tripped: false, trippedAt: null, tripReason: null });
    }
  });

  it('one floor read visits the run sockets once, not once per rig (they hold every run the lab ever ran)', async () => {
    const spy = jest.spyOn(t.ctx.ds, 'query');
    let call: unknown[] | undefined;
    try {
      await (await t.signIn('operator')).get('/api/floor').expect(200);
      call = spy.mock.calls.find(([sql]) => String(sql).includes('FROM rigs r'));
    } finally {
      spy.mockRestore();
    }
    expect(call).toBeDefined();
    const [{ 'QUERY PLAN': plan }] = await t.ctx.ds.query(`EXPLAIN (ANALYZE, FORMAT JSON) ${call![0] as string}`, call![1] as unknown[]);
    let loops = 0;
    const walk = (n: { 'Relation Name'?: string; 'Actual Loops'?: number; Plans?: unknown[] }) => {
      if (n['Relation Name'] === 'run_sockets') loops += n['Actual Loops'] ?? 0;
      for (const c of (n.Plans ?? []) as Array<typeof n>) walk(c);
    };
    walk(plan[0].Plan);
    // Before: a FULL JOIN per rig (lateral) read run_sockets once for each of the floor's rigs.
    expect(loops).toBe(1);
  });

  it('requests arriving while the floor is being read share that one read; a change people make starts a fresh one', async () => {
    const floor = t.ctx.services.floor;
    const spy = jest.spyOn(t.ctx.ds, 'query');
    try {
      const tileReads = () => spy.mock.calls.filter(([sql]) => String(sql).includes('LEFT JOIN LATERAL')).length;
      const together = await Promise.all(Array.from({ length: 8 }, () => floor.tiles()));
      expect(tileReads()).toBe(1);
      expect(together.every((x) => x === together[0])).toBe(true);
      expect(together[0].length).toBeGreaterThan(0);
      // Once it has answered, the next request reads again (nothing is kept).
      await floor.tiles();
      expect(tileReads()).toBe(2);
      spy.mockClear();
      const first = floor.tiles();
      const joined = floor.tiles();
      partialEvents().emit(ALARM_EVENT, { change: 'acknowledged', alarm: { rigId: rigA } });
      const after = floor.tiles();
      await Promise.all([first, joined, after]);
      expect(tileReads()).toBe(2); // first + joined shared one; the one after the change read again
    } finally {
      spy.mockRestore();
    }
  });

  it('signed-out callers get 401', async () => {
    expect((await request(t.app).get('/api/floor')).status).toBe(401);
  });
});

describe('GET /api/floor/rigs/:code', () => {
  it('the socket board: newest reading per socket, device serials, trips', async () => {
    const res = await (await t.signIn('manager')).get('/api/floor/rigs/ov-81');
    expect(res.status).toBe(200);
    expect(res.body.seq).toBe(1200);
    expect(res.body.sockets).toHaveLength(SOCKETS);
    expect(res.body.sockets[0]).toMatchObject({ index: 0, serial: 'HPD-L9901-001', biasOn: true, tripped: false, caseC: 152 });
    expect(res.body.sockets[3]).toMatchObject({ tripped: true, tripReason: 'Case above runaway limit' });
    expect(res.body.sockets[9]).toMatchObject({ tripped: true, biasOn: false });
    expect(res.body.sockets[12]).toMatchObject({ index: 12, caseC: null, serial: null, biasOn: false, tripped: false });
    expect((await (await t.signIn('manager')).get('/api/floor/rigs/OV-404')).status).toBe(404);
  });
});

describe('GET /api/floor/rigs/:code/chart', () => {
  const url = (q: string) => `/api/floor/rigs/OV-81/chart?${q}`;
  const iso = (ms: number) => encodeURIComponent(new Date(ms).toISOString());

  it('short spans come from raw samples, cut into at most `points` buckets', async () => {
    const agent = await t.signIn('operator');
    const res = await agent.get(url(`from=${iso(T0)}&to=${iso(T0 + 1200_000)}&points=50&sockets=0,9`));
    expect(res.status).toBe(200);
    expect(res.body.source).toBe('raw');
    expect(res.body.bucketMs).toBe(24_000);
    expect(res.body.chamber).toHaveLength(50);
    expect(res.body.sockets.map((s: { socket: number }) => s.socket)).toEqual([0, 9]);
    for (const s of res.body.sockets) expect(s.points).toHaveLength(50);
    for (const p of [...res.body.chamber, ...res.body.sockets[0].points]) {
      expect(p.min).toBeLessThanOrEqual(p.avg);
      expect(p.avg).toBeLessThanOrEqual(p.max);
      expect(Date.parse(p.t)).toBeGreaterThanOrEqual(T0);
      expect(Date.parse(p.t)).toBeLessThan(T0 + 1200_000);
    }
    const two = await agent.get(url(`from=${iso(T0)}&to=${iso(T0 + 1200_000)}&points=2`));
    expect(two.body.chamber.length).toBeLessThanOrEqual(2);
    // Default sockets: the three with the highest mean case temperature over the window (hottestByMean).
    expect(two.body.sockets.map((s: { socket: number }) => s.socket)).toEqual([7, 8, 9]);
  });

  it('spans over 30 minutes come from the per-minute rollups and stay within `points`', async () => {
    const agent = await t.signIn('operator');
    const res = await agent.get(url(`from=${iso(T0 - 3600_000)}&to=${iso(T0 + 3600_000)}&points=300&sockets=1`));
    expect(res.status).toBe(200);
    expect(res.body.source).toBe('minute');
    expect(res.body.chamber.length).toBeGreaterThan(0);
    expect(res.body.chamber.length).toBeLessThanOrEqual(300);
    expect(res.body.chamber.length).toBeLessThanOrEqual(20); // 20 minutes of data
    const avg = res.body.sockets[0].points.map((p: { avg: number }) => p.avg);
    for (const v of avg) expect(v).toBeGreaterThan(152);
    const few = await agent.get(url(`from=${iso(T0 - 3600_000)}&to=${iso(T0 + 3600_000)}&points=5`));
    expect(few.body.chamber.length).toBeLessThanOrEqual(5);
  });

  it('refuses bad queries', async () => {
    const agent = await t.signIn('operator');
    expect((await agent.get(url('points=5000'))).status).toBe(400);
    expect((await agent.get(url(`from=${iso(T0)}&to=${iso(T0 - 1000)}`))).status).toBe(400);
    expect((await agent.get(url('sockets=0,999'))).status).toBe(400);
    expect((await agent.get(url('sockets=0,1,2,3,4,5,6,7,8'))).status).toBe(400);
  });
});

describe('GET /api/floor/stream (server-sent events)', () => {
  it('needs an event-stream Accept header', async () => {
    const res = await (await t.signIn('operator')).get('/api/floor/stream');
    expect(res.status).toBe(400);
  });

  it('sends a tile within 2 s of telemetry landing, and nothing for signed-out callers', async () => {
    const server = http.createServer(t.app);
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
    const port = (server.address() as AddressInfo).port;
    try {
      const signIn = await request(t.app)
        .post('/api/auth/sign-in')
        .send({ email: emailFor('operator'), password: TEST_PASSWORD });
      const cookie = (signIn.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; ');
      const open = (withCookie: boolean) =>
        new Promise<http.IncomingMessage>((resolve, reject) => {
          const req = http.get(
            {
              host: '127.0.0.1',
              port,
              path: '/api/floor/stream',
              headers: { Accept: 'text/event-stream', ...(withCookie ? { Cookie: cookie } : {}) },
            },
            resolve,
          );
          req.on('error', reject);
        });
      const anon = await open(false);
      expect(anon.statusCode).toBe(401);
      anon.resume();

      const res = await open(true);
      expect(res.statusCode).toBe(200);
      expect(res.headers['content-type']).toMatch(/text\/event-stream/);
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => (text += chunk));
      await new Promise((r) => setTimeout(r, 100));
      expect(text).toContain(': connected');
      const t0 = Date.now();
      partialEvents().emit(TELEMETRY_LANDED, { rigId: rigA, rigCode: 'OV-81' });
      while (!text.includes('event: tile') && Date.now() - t0 < 2500) await new Promise((r) => setTimeout(r, 20));
      expect(Date.now() - t0).toBeLessThan(2000);
      const data = text.split('\n').find((l) => l.startsWith('data: '))!;
      const evt = JSON.parse(data.slice(6));
      expect(evt).toMatchObject({ type: 'tile', tile: { code: 'OV-81', powered: 9 } });
      // An alarm (its rig is inside the event's alarm) and a run event push the rig's tile too.
      for (const [event, payload] of [
        [ALARM_EVENT, { change: 'raised', alarm: { rigId: rigA } }],
        [RUN_EVENT, { type: 'state-changed', rigId: rigA }],
      ] as const) {
        text = '';
        const t1 = Date.now();
        partialEvents().emit(event, payload);
        while (!text.includes('event: tile') && Date.now() - t1 < 2500) await new Promise((r) => setTimeout(r, 20));
        expect({ event, sent: text.includes('event: tile') && text.includes('"OV-81"') }).toEqual({ event, sent: true });
      }
      res.destroy();
    } finally {
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
    }
  });
});
