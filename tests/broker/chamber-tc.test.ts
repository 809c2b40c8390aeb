/**
 * Temperature cycling in a chamber through the real pieces (issue #22 item 2): the broker, the
 * server's telemetry feature taking the chamber's own reports (topic `…/chamber`, zod-validated),
 * the simulated cycling chamber (rig-simulator/chamber.ts: air ramp, load lag, load-controlled
 * dwell) and the scheduler. The scheduler sends the plan's cycling programme; the server counts
 * cycles from the load temperature the chamber reports, holds at the read point in cycles (chamber
 * to room, devices out once the load is safe to open), resumes, and ends at the cycle target.
 */
import type { SimulatedChamber } from '../../rig-simulator/chamber';
import { countTcCycles, tcBands, tcCyclesToH, type TcProfile } from '../../shared/chamber/profile';
import { RunEntity, RunSocketEntity } from '../../server/db/entities';
import { chamberReportHandler } from '../../server/modules/chamber/chamber-reports';
import { RunsService } from '../../server/modules/runs/runs.service';
import { createTestDb } from '../support/db';
import { TEST_OPERATOR as operator, bookLoadedRun, insertMqttRig, startBrokerStack, type BrokerStack } from '../support/broker-stack';
import { recordTimeZero, setRigServiceDates } from '../support/permit';

jest.setTimeout(90_000);

// A short profile so the test runs in seconds: −20/+60 °C, 2 min dwell, 10 K/min (80 K: 8 min a ramp, 20 min a cycle).
const PROFILE: TcProfile = { lowC: -20, highC: 60, dwellMin: 2, rampKPerMin: 10, cycles: 6 };

let stack: BrokerStack;
let db: BrokerStack['db'];
let chamber: SimulatedChamber;
let runId: string;
let rigId: string;
const events: Array<{ type: string; readPointIndex?: number }> = [];

const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });

beforeAll(async () => {
  const testDb = await createTestDb();
  const tc01 = await insertMqttRig(testDb.ds, {
    code: 'TC-01',
    name: 'Cycling chamber 1',
    kind: 'chamber',
    socketCount: 50,
    minTempC: -70,
    maxVoltageV: 0,
    secret: 'tc01-chamber-secret',
  });
  rigId = tc01.id;
  const durationH = tcCyclesToH(PROFILE, PROFILE.cycles);
  runId = (
    await bookLoadedRun(testDb.ds, {
      rigId,
      lotCode: 'HG2611-T',
      serials: ['T0001', 'T0002', 'T0003'],
      plan: {
        name: 'TC −20/+60 °C, 6 cycles',
        kind: 'tc',
        chamberC: PROFILE.highC,
        bias: { vcbV: null, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
        durationH,
        // Read points in cycles 0 / 3 / 6, as the plan's hours (cycles × the profile's period).
        readPointsH: [0, tcCyclesToH(PROFILE, 3), durationH],
        cycle: null,
        thermalCycle: PROFILE,
        acCondition: null,
      },
      run: { code: 'TC-2611-T', scheduledMs: 600_000 },
    })
  ).runId;
  stack = await startBrokerStack(testDb, {
    clientId: 'emberlot-server-chamber-test',
    onContext: (ctx) => ctx.events.on('run-event', (e: { type: string; readPointIndex?: number }) => events.push(e)),
    onChamber: (ctx) => chamberReportHandler(ctx, () => undefined),
  });
  db = stack.db;
  // 10 chamber minutes per wall second, a report every 0.05 s: one every half chamber-minute.
  chamber = stack.startChamber(tc01, { minutesPerWallSecond: 10, samplePeriodWallS: 0.05, tauMin: 1.5 });
});

afterAll(() => stack?.stop());

const until = (state: string | string[], timeoutMs: number, also: (r: RunEntity) => boolean = () => true) =>
  stack.untilRun(runId, state, { timeoutMs, also, pollMs: 100 });

test('a TC run counts its cycles from the chamber’s load temperature, holds at the read point in cycles and ends at its target', async () => {
  await setRigServiceDates(db.ds, rigId);
  await recordTimeZero(db.ds, runId);
  for (let k = 0; k < 100 && !(await db.ds.query('SELECT 1 FROM chamber_samples WHERE rig_id = $1 LIMIT 1', [rigId])).length; k++) {
    await new Promise((r) => setTimeout(r, 50));
  }
  await new RunsService(stack.ctx).act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  stack.startScheduler();
  const sent = stack.sent;

  // The read point at 3 cycles: the count stops there exactly and the chamber goes to room.
  const held = await until('read-hold', 40_000);
  expect(held.cyclesDone).toBe(3);
  expect(held.stressHours).toBeCloseTo(tcCyclesToH(PROFILE, 3), 9);
  const programme = sent.find((x) => x.cmd.type === 'setpoint' && x.cmd.profile);
  expect(programme?.cmd).toMatchObject({ type: 'setpoint', profile: { lowC: -20, highC: 60, dwellMin: 2, rampKPerMin: 10 } });
  expect(sent.some((x) => x.cmd.type === 'bias')).toBe(false); // nothing is biased in a chamber
  // Safe to open only back inside 15–35 °C (OPEN_MIN_C): a chamber caught cold warms to room first.
  const safe = await until('read-hold', 30_000, (r) => r.biasRemovedAt !== null && r.holdPhase === 'safe-to-open');
  expect(safe.holdPhase).toBe('safe-to-open');
  // The command goes out after the step's transaction commits: wait for it rather than race it.
  const toRoom = () => sent.some((x) => x.cmd.type === 'setpoint' && x.cmd.setpointC === 25 && !x.cmd.profile);
  for (let k = 0; k < 150 && !toRoom(); k++) await new Promise((r) => setTimeout(r, 100));
  expect(toRoom()).toBe(true);
  expect(events.filter((e) => e.type === 'read-point-due').map((e) => e.readPointIndex)).toEqual([1]);
  const loads = await db.ds.query(`SELECT min(load_c) AS lo, max(load_c) AS hi FROM chamber_samples WHERE rig_id = $1`, [rigId]);
  const bands = tcBands(PROFILE);
  expect(Number(loads[0].hi)).toBeGreaterThanOrEqual(bands.hot.lowC);
  expect(Number(loads[0].hi)).toBeLessThanOrEqual(bands.hot.highC);
  expect(Number(loads[0].lo)).toBeLessThanOrEqual(bands.cold.highC);
  expect(Number(loads[0].lo)).toBeGreaterThanOrEqual(bands.cold.lowC);

  // Measured: back into the chamber, the programme again, and the end at 6 cycles.
  await new RunsService(stack.ctx).act(operator, runId, 'measurements-done', { rowVersion: (await run()).rowVersion });
  const done = await until(['cooling', 'finished'], 60_000);
  expect(done.cyclesDone).toBe(6);
  expect(done.stressHours).toBeCloseTo(tcCyclesToH(PROFILE, 6), 9);
  const sockets = await db.ds.getRepository(RunSocketEntity).find({ where: { runId } });
  expect(sockets.map((s) => s.cyclesDone)).toEqual([6, 6, 6]);
  // The smallest load swing of the counted cycles: the Coffin–Manson ΔT (at least the profile's 80 K).
  expect(sockets[0].lastDTjLowC).toBeGreaterThanOrEqual(80);

  // The same count from the stored reports by the pure counter: the server's count is what the load did.
  const rows: Array<{ clock_s: number; load_c: number }> = await db.ds.query(
    `SELECT clock_s, load_c FROM chamber_samples WHERE rig_id = $1 ORDER BY seq`,
    [rigId],
  );
  const all = countTcCycles(
    PROFILE,
    rows.map((x) => [x.clock_s / 60, x.load_c] as const),
  );
  expect(all.cycles).toBeGreaterThanOrEqual(6); // the whole record includes the hold and any cycle after the end
  expect(chamber.state().programCycles).toBeGreaterThanOrEqual(5);
});
