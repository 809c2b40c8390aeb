/**
 * Faults against the real processes (part 1), at the rig: the broker and API server run as
 * processes; the simulated rig (rig-simulator) is given
 *  - dropOff: its connection dies without DISCONNECT (the broker publishes its last will) for one
 *    simulated hour, again and again through the run, and it replays its outbox on return;
 *  - clockJump: its wall clock (`ts`) jumps back 1.5 h every 10 samples; hours come from the stress
 *    clock, so accrual must not notice.
 * Afterwards: every published sample stored exactly once, the hours equal the accrual rule applied
 * to the stored rows, the read point and the end neither lost nor doubled, no command applied twice.
 */
import { createTestDb } from '../support/db';
import { CLOCK, expectBooksBalance, printFigures, startFaultSuite, waitUntil, type FaultSuite } from '../faults/scenario';

jest.setTimeout(60_000);

/** One simulated hour in wall seconds. */
const HOUR_WALL_S = 1 / CLOCK.stressHoursPerWallSecond;

let suite: FaultSuite;

beforeAll(async () => {
  suite = await startFaultSuite(await createTestDb());
}, 60_000);

afterAll(() => suite?.stop());

test('a rig that drops off for a simulated hour, again and again, replays: every sample stored once, hours exact', async () => {
  const { stack, log } = suite;
  let dropsInStress = 0;
  const { fx, sim, f } = await suite.runScenario('OV-87', 'rig drops off 1 simulated h (repeated)', {
    // Off for 1 simulated hour every 6 simulated hours, from 1.5 s in: drops land in heating,
    // stressing, around the read point and in cooling, while commands are in flight.
    sim: { faults: { dropOff: { afterWallS: 1.5, forWallS: HOUR_WALL_S, everyWallS: 6 * HOUR_WALL_S } } },
    fault: (sim) => ({
      phase: 1,
      atH: 2,
      // And one drop on demand in the middle of stress (handle.dropFor), for good measure.
      inject: async () => {
        // dropFor does nothing while a scheduled drop is in progress: wait for the connection first.
        await waitUntil(() => sim.rig.connected, 10_000, 'rig connected before the drop');
        const before = sim.rig.stats.drops;
        sim.rig.dropFor(HOUR_WALL_S * 1000);
        dropsInStress = sim.rig.stats.drops - before;
        await new Promise((r) => setTimeout(r, HOUR_WALL_S * 1000 + 200));
      },
    }),
    timeoutMs: 55_000,
  });
  printFigures({ ...f, drops: sim.rig.stats.drops, startupS: stack.startupS } as typeof f);
  expect(dropsInStress).toBe(1);
  expect(sim.rig.stats.drops).toBeGreaterThanOrEqual(4);
  expect(sim.rig.stats.connects).toBeGreaterThanOrEqual(sim.rig.stats.drops);
  expectBooksBalance(f, fx, log, sim.rig);
});

test("the rig's wall clock jumps back 1.5 h every 10 samples: hours come from the stress clock, accrual is exact", async () => {
  const { ds, log } = suite;
  const { fx, sim, f } = await suite.runScenario('OV-89', 'rig wall clock jumps -1.5 h every 10 samples', {
    sim: { faults: { clockJump: { everySamples: 10, jumpS: -5400 } } },
    fault: () => null,
    timeoutMs: 55_000,
  });
  // The fault was live: the stored ts went backwards many times, the stress clock never did.
  const [{ back, clockBack }] = await ds.query(
    `SELECT count(*) FILTER (WHERE d_ts < 0) AS back, count(*) FILTER (WHERE d_clock < 0) AS "clockBack"
       FROM (SELECT extract(epoch FROM ts - lag(ts) OVER (ORDER BY seq)) AS d_ts,
                    stress_clock_s - lag(stress_clock_s) OVER (ORDER BY seq) AS d_clock
               FROM telemetry_batches WHERE rig_id = $1) x`,
    [fx.rigId],
  );
  printFigures({ ...f, tsBackwardSteps: Number(back) } as typeof f);
  expect(Number(back)).toBeGreaterThanOrEqual(Math.floor(f.published / 10) - 1);
  expect(Number(clockBack)).toBe(0);
  expectBooksBalance(f, fx, log, sim.rig);
});
