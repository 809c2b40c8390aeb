/**
 * Faults against the real processes (part 1): PostgreSQL stopped and restarted in the middle of a
 * stress run. This file runs its own cluster ('faults' on 127.0.0.1:54369, or EMBERLOT_FAULTS_PG_PORT; scripts/pg-cluster.ts)
 * because stopping the shared test cluster would break every other test file. The stop is an
 * immediate shutdown (SIGQUIT to the postmaster: backends killed, no checkpoint), so the restart
 * goes through crash recovery. Broker and API server run as processes on that cluster; the
 * simulated rig keeps stressing and keeps its unconfirmed samples.
 * Afterwards: every published sample stored exactly once, the hours equal the accrual rule applied
 * to the stored rows, the read point and the end neither lost nor doubled, no command applied twice.
 */
import type { DbConfig } from '../../server/config';
import { createDataSource } from '../../server/db/data-source';
import { clusterPid, destroyCluster, DB_PASSWORD, DB_USER, ensureDatabase } from '../../scripts/pg-cluster';
import { pgClusterAsync } from '../support/processes';
import { expectBooksBalance, printFigures, startFaultSuite, waitUntil, type FaultSuite } from '../faults/scenario';

jest.setTimeout(60_000);

/**
 * Durable settings (fsync and synchronous_commit on, as in production): the 'fast' settings of the
 * throwaway test cluster (synchronous_commit=off) let an immediate stop lose a transaction that
 * had already committed — and so a sample the rig had already been told was stored.
 */
const PORT = Number(process.env.EMBERLOT_FAULTS_PG_PORT ?? 54369);
const CLUSTER = { name: PORT === 54369 ? 'faults' : `faults-${PORT}`, port: PORT, fast: false };
const DB: DbConfig = { host: '127.0.0.1', port: CLUSTER.port, user: DB_USER, password: DB_PASSWORD, database: 'emberlot_faults' };

let suite: FaultSuite | undefined;

beforeAll(async () => {
  destroyCluster({ ...CLUSTER, quiet: true }); // a leftover from an interrupted run
  await pgClusterAsync('start', CLUSTER);
  await ensureDatabase({ ...DB, socketDir: '', dataDir: '', logFile: '' }, DB.database);
  const ds = createDataSource(DB, { poolSize: 4 }); // runs the migrations
  await ds.initialize();
  // The whole cluster goes with the database: stop() ends the processes first, then this.
  const drop = async () => {
    if (ds.isInitialized) await ds.destroy().catch(() => undefined);
    destroyCluster({ ...CLUSTER, quiet: true });
  };
  suite = await startFaultSuite({ ds, config: DB, drop });
}, 80_000);

afterAll(async () => {
  if (suite) await suite.stop();
  else destroyCluster({ ...CLUSTER, quiet: true });
});

test('PostgreSQL stopped (immediate) and restarted mid-run: every sample stored once, hours exact, no command applied twice', async () => {
  const { stack, log } = suite!;
  const apiMark = stack.api.offset();
  const { fx, sim, f } = await suite!.runScenario('OV-85', 'PostgreSQL immediate stop + restart', {
    fault: () => ({
      phase: 1,
      atH: 1.5,
      inject: async () => {
        const pid = clusterPid(CLUSTER);
        expect(pid).not.toBeNull();
        process.kill(pid!, 'SIGQUIT'); // immediate shutdown
        await waitUntil(() => clusterPid(CLUSTER) === null, 20_000, 'postmaster gone');
        // The ingest notices on its next write and holds what arrives.
        await stack.api.waitForLine(/database write failed/, 20_000, apiMark);
        await new Promise((r) => setTimeout(r, 2000));
        await pgClusterAsync('start', CLUSTER);
      },
    }),
    timeoutMs: 70_000,
  });
  // The ingest said so once, and said when it was back.
  expect(stack.api.lines(/\[ingest\] database write failed/).length).toBe(1);
  expect(stack.api.lines(/\[ingest\] database back/).length).toBeGreaterThanOrEqual(1);
  expect(stack.api.running && stack.broker.running).toBe(true);
  printFigures({ ...f, startupS: stack.startupS } as typeof f);
  expectBooksBalance(f, fx, log, sim.rig);
}, 80_000);
