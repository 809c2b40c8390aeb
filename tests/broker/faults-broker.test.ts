/**
 * Faults against the real processes (part 1): the broker process (broker/main.ts) is killed with
 * SIGKILL in the middle of a stress run and started again on the same port; the API server process
 * keeps running and reconnects (tests/broker/faults-processes.test.ts kills the API server).
 * A simulated rig (rig-simulator, 2 stress hours per wall second, a sample every 0.1 s) keeps
 * stressing and keeps every unconfirmed sample in its outbox. Afterwards every published sample is
 * stored exactly once, the run's hours equal the accrual rule applied to the stored rows, the 4 h
 * read point and the 12 h end were neither lost nor doubled, and no command was applied twice.
 * See tests/faults/scenario.ts for the checks and docs/reliability.md for the figures.
 */
import { createTestDb } from '../support/db';
import { expectBooksBalance, printFigures, startFaultSuite, type FaultSuite } from '../faults/scenario';

jest.setTimeout(60_000);

let suite: FaultSuite;

beforeAll(async () => {
  suite = await startFaultSuite(await createTestDb());
}, 60_000);

afterAll(() => suite?.stop());

test('broker process SIGKILLed and restarted mid-run: every sample stored once, hours exact, no command applied twice', async () => {
  const { stack, log } = suite;
  const { fx, sim, f } = await suite.runScenario('OV-81', 'broker SIGKILL + restart', {
    fault: (sim) => ({
      phase: 1,
      atH: 1.5,
      inject: async () => {
        const exit = await stack.restartBroker('SIGKILL', 1000);
        expect(exit.signal).toBe('SIGKILL');
        // The rig saw the broker go.
        expect(sim.rig.stats.disconnects).toBeGreaterThanOrEqual(1);
      },
    }),
    timeoutMs: 55_000,
  });
  printFigures({ ...f, startupS: stack.startupS } as typeof f);
  // The rig and the server's link both came back to the new broker.
  expect(sim.rig.stats.connects).toBeGreaterThanOrEqual(2);
  expect(stack.api.lines(/\[mqtt\] lost the broker/).length).toBe(1);
  expect(stack.api.lines(/\[mqtt\] reconnected to/).length).toBe(1);
  expectBooksBalance(f, fx, log, sim.rig);
});
