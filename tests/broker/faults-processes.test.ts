/**
 * Faults against the real processes (part 1): the API server process (server/main.ts: ingest,
 * scheduler, protection) is killed with SIGKILL in the middle of a stress run and started again;
 * the broker keeps running (tests/broker/faults-broker.test.ts kills the broker). A simulated rig
 * (rig-simulator, 2 stress hours per wall second, a sample every 0.1 s) keeps stressing and keeps
 * every unconfirmed sample in its outbox. Afterwards every published sample is stored exactly once,
 * the run's hours equal the accrual rule applied to the stored rows, the 4 h read point and the
 * 12 h end were neither lost nor doubled, and no command was applied twice at the rig.
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

test('API server process SIGKILLed and restarted mid-run: every sample stored once, hours exact, no command applied twice', async () => {
  const { stack, log } = suite;
  const { fx, sim, f } = await suite.runScenario('OV-83', 'API server SIGKILL + restart', {
    fault: () => ({
      phase: 2,
      atH: 7,
      inject: async () => {
        const exit = await stack.restartApi('SIGKILL', 500);
        expect(exit.signal).toBe('SIGKILL'); // no shutdown code ran: no drain, no goodbye
        // The session lives in PostgreSQL: the operator stays signed in across the restart.
        expect((await stack.client.request('GET', '/api/auth/me')).status).toBe(200);
      },
    }),
    timeoutMs: 55_000,
  });
  printFigures({ ...f, startupS: stack.startupS } as typeof f);
  expectBooksBalance(f, fx, log, sim.rig);
});
