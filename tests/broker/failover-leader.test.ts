/**
 * Leader hand-over between two API processes (EMBERLOT_WORKERS=elect; server/cluster/): the
 * leader is SIGKILLed mid-ingest at the moment a command is in flight to the rig; the standby takes
 * the PostgreSQL advisory lock and the ingest's MQTT session. Real PostgreSQL, the real broker
 * process, the real API processes, the rig simulator. See tests/faults/leader-failover.ts.
 */
import { createTestDb, type TestDb } from '../support/db';
import { stopAllProcesses } from '../support/processes';
import { installRigCommandLog, type RigCommandLog } from '../faults/rig-command-log';
import { expectBooksBalance, printFigures, seedBase } from '../faults/scenario';
import { runLeaderFailover, type FailoverRun } from '../faults/leader-failover';

jest.setTimeout(150_000);

/** The standby must lead within this many seconds of the kill (issue #24: "within seconds"; bench target < 10 s). */
const LEAD_WITHIN_S = 10;

let db: TestDb;
let log: RigCommandLog;
let run: FailoverRun | null = null;

beforeAll(async () => {
  log = installRigCommandLog();
  db = await createTestDb();
});

afterAll(async () => {
  await run?.sim.rig.stop();
  await run?.stop();
  await stopAllProcesses(3000);
  log?.uninstall();
  await db?.drop();
});

test('leader SIGKILLed with a command in flight: the standby leads within seconds, every sample stored once with no gap, the command applied once', async () => {
  const type = await seedBase(db.ds);
  run = await runLeaderFailover(db.ds, db.config, type, log);
  const f = run.figures;
  printFigures(f);

  // The standby took over, and says so in /api/health (the leader row names it, its lock is held).
  expect(f.leadSeconds).toBeLessThan(LEAD_WITHIN_S);
  expect(f.recoverySeconds).toBeLessThan(LEAD_WITHIN_S);
  expect(f.health.survivor?.mode).toBe('elect');
  expect(f.health.survivor?.role).toBe('leader');
  expect(f.health.survivor?.leader?.processId).toBe(f.health.survivor?.processId);
  expect(f.health.leaderRowHolder).toBe(f.health.survivor?.processId);

  // The standby's live floor followed the leader's ingest (floor relay over NOTIFY).
  expect(f.standbyFloorTiles).toBeGreaterThan(0);

  // Samples: 1..lastSeq stored exactly once (no gap, no duplicate row); hours, read point, commands.
  expectBooksBalance(f, run.fx, log, run.sim.rig);
  expect(f.duplicateCommands).toBe(0);
  // Nothing the rig had answered before the kill was published to it again by the new leader.
  expect(f.republishedAnswered).toBe(0);

  // The command in flight at the kill: applied once by the rig, answered in the command log.
  expect(f.inFlight.cmdId).toMatch(/:cool:rp1$/);
  expect(f.inFlight.appliedAtRig).toBe(1);
  expect(f.inFlight.state).toBe('acked');
});
