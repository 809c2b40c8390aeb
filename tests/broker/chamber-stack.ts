/**
 * The real pieces for chamber tests through the broker (tests/broker/chamber-*.test.ts): the API app
 * on a fresh database, the aedes broker with PostgreSQL sign-in, the server's telemetry feature
 * taking chamber reports (validated, stored by the chamber module), the scheduler, and simulated
 * chambers (rig-simulator/chamber.ts) signed in with the credentials the API issued.
 */
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { SimulatedChamber, type ChamberRigConfig } from '../../rig-simulator/chamber';
import type { CommandAck } from '../../shared/mqtt';
import { RunEntity } from '../../server/db/entities';
import { chamberReportHandler } from '../../server/modules/chamber/chamber-reports';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { createTestApp, type TestApp } from '../support/api';
import { waitFor } from './mqtt-test-helpers';

const SERVER = { username: 'emberlot-server', password: 'server-secret' };

export interface ChamberStack {
  t: TestApp;
  brokerUrl: string;
  /** Every command the scheduler sent, by rig. */
  sent: Array<{ rig: string; cmd: RigCommandBody }>;
  /** Run events (type, run, read-point index). */
  events: Array<{ type: string; runId?: string; readPointIndex?: number; final?: boolean }>;
  startScheduler: () => void;
  simulate: (cfg: Omit<ChamberRigConfig, 'brokerUrl'>) => SimulatedChamber;
  stop: () => Promise<void>;
}

export async function startChamberStack(clientId: string): Promise<ChamberStack> {
  const t = await createTestApp();
  const ctx = t.ctx;
  const eb: EmberlotBroker = await createEmberlotBroker({
    port: 0,
    authenticate: createPgAuthenticate({ pool: pgPoolOf(ctx), server: SERVER, verifiedCacheSize: 10 }),
  });
  const brokerUrl = `mqtt://127.0.0.1:${eb.port}`;
  const stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: brokerUrl, ...SERVER },
    clientId,
    sweepEveryMs: 60_000,
    onChamber: chamberReportHandler(ctx, () => undefined),
  });
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
  const sent: ChamberStack['sent'] = [];
  const events: ChamberStack['events'] = [];
  ctx.events.on('run-event', (e) => events.push(e));
  const spyLink: RigLink = {
    connected: () => ctx.services.rigLink!.connected(),
    send: (rigCode, cmd, opts): Promise<CommandAck> => {
      sent.push({ rig: rigCode, cmd });
      return ctx.services.rigLink!.send(rigCode, cmd, opts);
    },
  };
  let scheduler: RunScheduler | null = null;
  const chambers: SimulatedChamber[] = [];
  return {
    t,
    brokerUrl,
    sent,
    events,
    startScheduler: () => {
      scheduler = new RunScheduler(ctx, { rigLink: () => spyLink, log: () => undefined, ambientCheckEveryMs: 0 });
      scheduler.start();
    },
    simulate: (cfg) => {
      const c = new SimulatedChamber({ ...cfg, brokerUrl });
      chambers.push(c);
      c.start();
      return c;
    },
    stop: async () => {
      await scheduler?.stop();
      await Promise.all(chambers.map((c) => c.stop()));
      await stopTelemetry();
      await eb.close();
      await t.close();
    },
  };
}

/** Registers a chamber through the API (admin) and returns its id and the MQTT credentials issued once. */
export async function registerChamber(
  t: TestApp,
  body: Record<string, unknown> & { code: string },
): Promise<{ id: string; username: string; secret: string }> {
  const admin = await t.signIn('admin');
  const res = await admin.post('/api/rigs').send({ kind: 'chamber', maxVoltageV: 0, ...body });
  if (res.status !== 201) throw new Error(`registering ${body.code}: ${res.status} ${JSON.stringify(res.body)}`);
  return { id: res.body.rig.id, username: res.body.credentials.username, secret: res.body.credentials.secret };
}

/** Polls the run until it is in one of `states` (and `also` holds). */
export async function untilRun(
  t: TestApp,
  runId: string,
  state: string | string[],
  timeoutMs: number,
  also: (r: RunEntity) => boolean = () => true,
): Promise<RunEntity> {
  const states = Array.isArray(state) ? state : [state];
  const deadline = Date.now() + timeoutMs;
  const read = () => t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
  while (Date.now() < deadline) {
    const r = await read();
    if (states.includes(r.state) && also(r)) return r;
    await new Promise((res) => setTimeout(res, 100));
  }
  const r = await read();
  throw new Error(`run did not reach ${states.join(' or ')} (is ${r.state}, ${r.stressHours} h, hold ${r.holdPhase})`);
}

/** Waits until the chamber's first report is stored (the start permit reads it). */
export async function untilReported(t: TestApp, rigId: string): Promise<void> {
  for (let k = 0; k < 100; k++) {
    if ((await t.ctx.ds.query('SELECT 1 FROM chamber_samples WHERE rig_id = $1 LIMIT 1', [rigId])).length) return;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error('no chamber report stored');
}
