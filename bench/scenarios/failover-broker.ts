/**
 * failoverBroker (issue #24 items 3 and 6): a broker node killed mid-ingest on the cluster layout.
 *
 * Its own database in the bench cluster (`emberlot_failover`, migrated), a private Redis
 * (EMBERLOT_BENCH_REDIS_PORT, else a free port), two broker processes in Redis mode, one API process
 * given both brokers, and simulated rigs in this process given both brokers with persistent
 * sessions (tests/faults/cluster.ts — the same layout the failover test uses). One rig runs a whole
 * HTRB run through the API (heat, bias, read-point hold, end: the commands); the others only
 * publish (4 sockets every 0.1 s each). Mid-run broker A — every client's first address — is killed
 * with SIGKILL and not restarted.
 *
 *   published          samples the rigs published (seq 1…last per rig)
 *   stored             distinct samples in telemetry_batches
 *   lost               published but not stored (target 0)
 *   duplicateRows      stored more than once (0 by the key; counted anyway)
 *   duplicateCommands  commands a rig applied more than once (first acks per cmdId vs applied; target 0)
 *   commandDeliveries  / commandsApplied: MQTT deliveries of run commands vs distinct commands applied
 *   recoverySeconds    kill → every rig has a sample published after the kill stored (target < 10)
 */
import type { DataSource } from 'typeorm';
import { configFromEnv, type DbConfig } from '../../server/config';
import { createDataSource } from '../../server/db/data-source';
import { ensureDatabase } from '../../scripts/pg-cluster';
import { startClusterStack } from '../../tests/faults/cluster';
import { installRigCommandLog } from '../../tests/faults/rig-command-log';
import {
  OPERATOR,
  createFaultRun,
  driveRun,
  ingestCounters,
  reconcile,
  seedBase,
  startSimRig,
  type SimRig,
} from '../../tests/faults/scenario';
import { stopAllProcesses } from '../../tests/support/processes';
import type { BenchEnv } from '../lib/environment';

export interface FailoverBrokerResult {
  rigs: number;
  published: number;
  stored: number;
  lost: number;
  duplicateRows: number;
  duplicateCommands: number;
  commandDeliveries: number;
  commandsApplied: number;
  recoverySeconds: number | null;
  /** The driven run's hours and read point came out exact (tests/faults/scenario.ts reconcile). */
  runBooksBalance: boolean;
  wallSeconds: number;
}

const EXTRA_RIGS = Number(process.env.EMBERLOT_BENCH_FAILOVER_RIGS ?? 7);
const DATABASE = 'emberlot_failover';

async function storedSeqs(ds: DataSource, rigId: string): Promise<number[]> {
  const rows: Array<{ seq: string }> = await ds.query('SELECT seq FROM telemetry_batches WHERE rig_id = $1', [rigId]);
  return rows.map((r) => Number(r.seq));
}

export async function runFailoverBroker(b: BenchEnv, log: (l: string) => void): Promise<FailoverBrokerResult> {
  const t0 = Date.now();
  await ensureDatabase(b.cluster, DATABASE);
  const db: DbConfig = { ...configFromEnv(b.env).db, database: DATABASE };
  const ds = createDataSource(db, { poolSize: 4 });
  await ds.initialize(); // migrations
  const cmdLog = installRigCommandLog();
  const sims: SimRig[] = [];
  try {
    const type = await seedBase(ds);
    const stack = await startClusterStack(db, { redisPortEnv: 'EMBERLOT_BENCH_REDIS_PORT', name: 'bench' });
    try {
      log(`failoverBroker: Redis ${stack.redis.url}, brokers :${stack.brokerPorts.join(' and :')}, API :${stack.ports.api}`);
      await stack.client.signIn(OPERATOR.email, OPERATOR.password);
      const started = { at: Date.now(), counters: await ingestCounters(ds) };
      const driven = await createFaultRun(ds, type, 'FB-00');
      const others = [];
      for (let k = 1; k <= EXTRA_RIGS; k++) others.push(await createFaultRun(ds, type, `FB-${String(k).padStart(2, '0')}`));
      const drivenSim = startSimRig(stack.brokerUrl, driven, { persistentSession: true });
      sims.push(drivenSim);
      for (const fx of others) sims.push(startSimRig(stack.brokerUrl, fx, { persistentSession: true }));
      const fixtures = [driven, ...others];
      let recoverySeconds: number | null = null;
      const drive = await driveRun(
        ds,
        stack,
        driven,
        drivenSim,
        {
          phase: 1,
          atH: 1.5,
          inject: async () => {
            const seqAtKill = sims.map((s) => s.rig.lastSeq());
            const killedAt = Date.now();
            await stack.killBroker(0, 'SIGKILL');
            // Recovered: every rig has a sample it took after the kill stored by the API.
            for (;;) {
              const max: Array<{ rig_id: string; m: string }> = await ds.query(
                'SELECT rig_id, max(seq) AS m FROM telemetry_batches WHERE rig_id = ANY($1) GROUP BY rig_id',
                [fixtures.map((f) => f.rigId)],
              );
              const byRig = new Map(max.map((r) => [r.rig_id, Number(r.m)]));
              if (fixtures.every((f, i) => (byRig.get(f.rigId) ?? 0) > seqAtKill[i])) break;
              if (Date.now() - killedAt > 60_000) throw new Error('the rigs did not recover within 60 s of the broker kill');
              await new Promise((r) => setTimeout(r, 50));
            }
            recoverySeconds = Math.round((Date.now() - killedAt) / 100) / 10;
          },
        },
        120_000,
      );
      for (const s of sims.slice(1)) s.endSampling();
      await Promise.all(sims.slice(1).map((s) => s.rig.drained(30_000)));
      const f = await reconcile(ds, 'bench failoverBroker', driven, drivenSim, cmdLog, drive, started);
      let published = f.published;
      let stored = f.stored;
      let lost = f.missing;
      let duplicateRows = f.duplicateRows;
      for (let i = 0; i < others.length; i++) {
        const seqs = await storedSeqs(ds, others[i].rigId);
        const last = sims[i + 1].rig.lastSeq();
        const set = new Set(seqs);
        published += last;
        stored += set.size;
        duplicateRows += seqs.length - set.size;
        for (let s = 1; s <= last; s++) if (!set.has(s)) lost++;
      }
      const runBooksBalance =
        f.missing === 0 &&
        f.hoursAccrued === f.hoursExpected &&
        f.readPoints === 1 &&
        f.endH === f.hoursAccrued &&
        f.cmdIdsAppliedTwice === 0;
      return {
        rigs: sims.length,
        published,
        stored,
        lost,
        duplicateRows,
        duplicateCommands: sims.reduce((n, s) => n + s.rig.stats.commandsApplied, 0) - f.commandsApplied,
        commandDeliveries: f.commandDeliveries,
        commandsApplied: f.commandsApplied,
        recoverySeconds,
        runBooksBalance,
        wallSeconds: Math.round((Date.now() - t0) / 1000),
      };
    } finally {
      for (const s of sims) await s.rig.stop().catch(() => undefined);
      await stopAllProcesses(3000);
      await stack.stopRedis();
    }
  } finally {
    cmdLog.uninstall();
    await ds.destroy().catch(() => undefined);
  }
}
