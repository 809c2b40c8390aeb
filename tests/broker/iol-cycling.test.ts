/**
 * Intermittent operating life through the real pieces: the broker, the server's telemetry feature
 * (ingest + RigLink), the rig simulator cycling its sockets and the scheduler. The bias command
 * carries the plan's on/off times; the simulated rig switches power, reads each cycle's junction
 * swing from its TSP and reports it with its cycle counters; ingest stores the reports
 * (telemetry_cycles); accrual counts the cycles within the ΔTj band and the run ends at its
 * cycle target exactly.
 */
import type { RigHandle } from '../../rig-simulator';
import { cycleBand } from '../../shared/scheduling';
import { RunEntity } from '../../server/db/entities';
import { socketCyclesOfRun } from '../../server/modules/runs/cycles.data';
import { RunsService } from '../../server/modules/runs/runs.service';
import { createTestDb } from '../support/db';
import { TEST_OPERATOR, bookLoadedRun, insertMqttRig, startBrokerStack, type BrokerStack } from '../support/broker-stack';
import { permitFromLiveRig } from '../support/permit';
import { waitFor } from './mqtt-test-helpers';

jest.setTimeout(60_000);

const TARGET_CYCLES = 30;

let stack: BrokerStack;
let db: BrokerStack['db'];
let rig: RigHandle;
let runId: string;
let rigId: string;

const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });

beforeAll(async () => {
  const testDb = await createTestDb();
  const ov08 = await insertMqttRig(testDb.ds, { code: 'OV-08', name: 'Cycling board 8', socketCount: 4, secret: 'ov08-cycling-secret' });
  rigId = ov08.id;
  runId = (
    await bookLoadedRun(testDb.ds, {
      rigId,
      lotCode: 'HG2611-C',
      serials: ['C0001', 'C0002', 'C0003'],
      // 30 cycles of 1 + 1 min = 1 h; ΔTj ≥ 100 K [pub: MIL-STD-750 method 1037 as used by AEC-Q101 — memory, confirm].
      plan: {
        name: 'IOL ΔTj 100 K, 30 cycles',
        kind: 'iol',
        chamberC: 25,
        bias: { vcbV: null, vebV: null, vceV: 20, ibA: null, icA: 0.1, tolerancePct: 5 },
        durationH: 1,
        readPointsH: [0, 1],
        cycle: { onMin: 1, offMin: 1, deltaTjC: 100, cycles: TARGET_CYCLES },
      },
      run: { code: 'IOL-2611-C' },
    })
  ).runId;
  stack = await startBrokerStack(testDb, { clientId: 'emberlot-server-cycling-test' });
  db = stack.db;
  // 40 stress seconds per message (a sample every 0.1 s at 0.111 stress h per wall second): three
  // messages per 120 s cycle. The sockets sit on a poor heat sink (θca 40 K/W, τ 20 s) so a few
  // watts swing the junction by ~100 K; the rig steers the drive toward the planned swing.
  rig = await stack.startRig(ov08, {
    sockets: 4,
    mode: 'powered',
    chamberC: 25,
    setpointC: 25,
    biasOn: false,
    thetaCaCPerW: 40,
    caseTauStressS: 20,
    stressHoursPerWallSecond: 40 / 0.1 / 3600,
    samplePeriodWallS: 0.1,
    reconnectWallS: 0.1,
    resendAfterWallS: 1,
  });
});

afterAll(() => stack?.stop());

const until = (state: string | string[], timeoutMs: number) => stack.untilRun(runId, state, { timeoutMs, pollMs: 100 });

test('a simulated IOL run cycles, counts the cycles within its ΔTj band and ends at its cycle target', async () => {
  // The start permit: service dates, time-zero readings, and the sockets from the rig's own stored telemetry.
  await permitFromLiveRig(db.ds, runId, rigId);
  await new RunsService(stack.ctx).act(TEST_OPERATOR, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  stack.startScheduler();
  await until(['stressing', 'cooling', 'finished'], 15_000);
  // At a 25 °C chamber the cool-down is over at once: on a loaded machine the run may be finished
  // before a poll sees it cooling. Either way stress ended.
  await until(['cooling', 'finished'], 45_000);

  const bias = stack.sent.find((x) => x.cmd.type === 'bias' && x.cmd.on);
  expect(bias?.cmd).toMatchObject({ sockets: [0, 1, 2], vV: 20, icA: 0.1, cycle: { onS: 60, offS: 60, deltaTjC: 100 } });

  const r = await run();
  expect(r.cyclesDone).toBe(TARGET_CYCLES);
  const sockets = await socketCyclesOfRun(db.ds.manager, runId);
  expect(sockets.map((s) => s.socket)).toEqual([0, 1, 2]);
  const band = cycleBand(100);
  for (const s of sockets) {
    expect(s.cyclesDone).toBeLessThanOrEqual(TARGET_CYCLES);
    expect(s.cyclesDone).toBeGreaterThan(TARGET_CYCLES - 5);
    // The first swings (before the rig's drive settled) were below 100 K: completed, not credited.
    expect(s.cyclesMissed).toBeGreaterThan(0);
    expect(s.lastDTjLowC!).toBeGreaterThanOrEqual(band.lowC);
    expect(s.lastDTjHighC!).toBeLessThanOrEqual(band.highC);
  }
  expect(Math.max(...sockets.map((s) => s.cyclesDone))).toBe(TARGET_CYCLES);
  // The rig's own counters ran on: what it completed is at least what was credited and missed.
  const counters = rig.state().sockets.map((s) => s.cycleCount ?? 0);
  for (const s of sockets) expect(counters[s.socket]).toBeGreaterThanOrEqual(s.cyclesDone + s.cyclesMissed);
  expect(counters[3]).toBe(0); // the empty socket never cycled
  // Stored reports: every message of the run carries a row per socket.
  const [{ n }] = await db.ds.query(
    `SELECT count(*)::int AS n FROM telemetry_cycles c JOIN rigs g ON g.id = c.rig_id WHERE g.code = 'OV-08'`,
  );
  expect(n).toBeGreaterThan(TARGET_CYCLES * 3 * 4 * 0.9);
  // Bias is off at the rig once stress ended, and with it the cycling program.
  await waitFor(() => rig.state().sockets.every((s) => !s.biasOn && !s.cycle), 5000, 'bias off at the rig');
});
