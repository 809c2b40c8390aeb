/**
 * failoverLeader (issue #24 items 4 and 6, the leader half; EMBERLOT_BENCH_SCENARIOS=failoverLeader): two API processes with
 * EMBERLOT_WORKERS=elect, a broker and a simulated rig (10 messages per second, 4 sockets) on a
 * database of their own in the bench cluster (`emberlot_failover_leader`); the leader is SIGKILLed mid-ingest, at the moment the
 * rig receives the read-point hold's first command (in flight). The scenario itself is
 * tests/faults/leader-failover.ts (tests/broker/failover-leader.test.ts asserts the same run).
 *
 *   published / stored / lost     the rig's seqs 1..last, the distinct seqs stored, the difference
 *   duplicateRows                 rows stored more than once (messages, socket rows, rollup counts)
 *   duplicateCommands             commands the rig applied beyond one per wanted command
 *   recoverySeconds               SIGKILL → first sample published after it stored (ingest running again)
 *   leadSeconds                   SIGKILL → the standby's /api/health answering role "leader"
 * Targets: lost 0, duplicateCommands 0, recoverySeconds < 10.
 */
import { createDataSource } from '../../server/db/data-source';
import { ensureDatabase } from '../../scripts/pg-cluster';
import { installRigCommandLog } from '../../tests/faults/rig-command-log';
import { runLeaderFailover } from '../../tests/faults/leader-failover';
import { seedBase } from '../../tests/faults/scenario';
import type { BenchEnv } from '../lib/environment';

// Not failoverBroker's database: both seed the same operator, and one bench run may run both.
const DATABASE = 'emberlot_failover_leader';

export interface FailoverLeaderResult {
  published: number;
  stored: number;
  lost: number;
  duplicateRows: number;
  duplicateCommands: number;
  recoverySeconds: number;
  leadSeconds: number;
  inFlightCommand: { appliedAtRig: number; state: string | null; publishes: number | null };
  wallSeconds: number;
}

export async function runFailoverLeader(b: BenchEnv, log: (l: string) => void): Promise<FailoverLeaderResult> {
  await ensureDatabase(b.cluster, DATABASE);
  const c = b.cluster;
  const db = { host: c.host, port: c.port, user: c.user, password: c.password, database: DATABASE };
  const ds = createDataSource(db, { poolSize: 4 });
  await ds.initialize(); // migrations
  const commands = installRigCommandLog();
  let run: Awaited<ReturnType<typeof runLeaderFailover>> | null = null;
  try {
    const type = await seedBase(ds);
    run = await runLeaderFailover(ds, db, type, commands, { rigCode: 'OV-97' });
    const f = run.figures;
    log(
      `failover-leader: killed the leader at ${f.inFlight.cmdId.split(':').slice(-2).join(':')} in flight; standby led after ${f.leadSeconds} s, ingest again after ${f.recoverySeconds} s; ${f.stored}/${f.published} stored`,
    );
    return {
      published: f.published,
      stored: f.stored,
      lost: f.missing,
      duplicateRows: f.duplicateRows,
      duplicateCommands: f.duplicateCommands,
      recoverySeconds: f.recoverySeconds,
      leadSeconds: f.leadSeconds,
      inFlightCommand: { appliedAtRig: f.inFlight.appliedAtRig, state: f.inFlight.state, publishes: f.inFlight.publishes },
      wallSeconds: f.wallS,
    };
  } finally {
    await run?.sim.rig.stop();
    await run?.stop();
    commands.uninstall();
    await ds.destroy().catch(() => undefined);
  }
}
