/**
 * Demo runs that keep the floor moving (after the history step): one under stress and one heating
 * on demo rigs (the scheduler picks them up and commands the simulated rigs), one being loaded,
 * and one booked for later. Devices are the lots' spares not used by the history runs.
 * Each spec is checked against its rig with the same constraint checks as a booking; a spec that
 * does not fit (a changed demo rig) is skipped with a log line rather than stored wrong.
 */
import type { DataSource, EntityManager } from 'typeorm';
import { In } from 'typeorm';
import { ON_RIG_STATES } from '../../shared/domain/run-states';
import { chamberNeedsOf, planBiasV, rigRefusals, runDurationMs } from '../../shared/scheduling';
import { tcCyclesToH } from '../../shared/chamber/profile';
import type { PlanKind } from '../../shared/schemas/plans';
import type { RunState } from '../../shared/schemas/runs';
import { configFromEnv } from '../config';
import { sampleShortfall } from '../../shared/evidence';
import {
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  SampleEntity,
  StressPlanEntity,
  UserEntity,
} from '../db/entities';
import { timingFrom } from '../modules/runs/scheduling-data';
import { firstReadPointIndex } from '../modules/runs/run-engine';
import { AuditService } from '../modules/audit/audit.service';
import { DEFAULT_PRIORITY } from '../../shared/domain/priority';

interface DemoLiveRun {
  code: string;
  partNumber: string;
  kind: PlanKind;
  lots: string[];
  rig: string;
  state: Extract<RunState, 'booked' | 'loading' | 'heating' | 'stressing'>;
  /** Devices per lot, taken after the first `skip` serials of each lot (the history used those). */
  perLot: number;
  skip: number;
  /** Sockets loaded (loading state); default all. */
  loaded?: number;
  stressHours?: number;
  /** Cycling runs: cycles credited so far (run and every socket). */
  cycles?: number;
  /** Booked runs: start this many stress-clock hours from now. */
  startsInH?: number;
  /**
   * Booked to start once the runs already on its rig have ended: a run that shared the oven with them
   * would hold its read points while they still need it hot (the sharing rule, shared/scheduling/sharing.ts).
   */
  afterRunsOnRig?: boolean;
  /** Why the sample may be smaller than the plan asks (recorded deviation, issue #19). */
  deviation?: string;
  /** The request's due date, this many stress-clock hours from now, and its priority (1 low … 4 urgent). */
  dueInH?: number;
  priority?: number;
}

const DEMO_LIVE_RUNS: DemoLiveRun[] = [
  {
    code: 'THB-2612-G',
    partNumber: 'HPD-7N400',
    kind: 'thb',
    lots: ['HG2612-G'],
    rig: 'HC-05',
    state: 'stressing',
    perLot: 40,
    skip: 0,
    stressHours: 120,
    deviation: 'Engineering look at the 2612 die attach, not a qualification: 40 devices on the humidity board.',
    dueInH: 1400,
    priority: 3,
  },
  {
    code: 'HOTL-2609-D-2',
    partNumber: 'HPD-3P90',
    kind: 'hotl',
    lots: ['HG2609-D'],
    rig: 'OV-03',
    state: 'heating',
    perLot: 40,
    skip: 45,
    deviation: 'Engineering run on the spares of HG2609-D after the heat-sink change: 40 devices.',
    // Due before the plan can finish: the schedule shows it late.
    dueInH: 900,
    priority: 4,
  },
  {
    code: 'IOL-2605-H',
    partNumber: 'HPD-S230',
    kind: 'iol',
    lots: ['HG2605-H'],
    rig: 'OV-06',
    state: 'loading',
    perLot: 32,
    skip: 0,
    loaded: 20,
    deviation: 'Quarterly reel-stock monitor: one cycling board (32 devices) by the monitor procedure.',
  },
  {
    // Power cycling for real (issue #20 item 1): the simulated bench switches power, reads each
    // cycle's junction swing from the devices' TSP and the run counts cycles toward 15,000.
    code: 'IOL-2605-J',
    partNumber: 'HPD-S230',
    kind: 'iol',
    lots: ['HG2605-H'],
    rig: 'CY-07',
    state: 'stressing',
    perLot: 16,
    skip: 32,
    stressHours: 120,
    cycles: 1800,
    deviation: 'Reel-stock cycling monitor: one 16-socket bench by the monitor procedure.',
  },
  {
    // QUAL-001's temperature cycling on the spares of HG2612-C (issue #22): the simulated chamber
    // TC-01 runs the plan's programme and the server counts cycles from its load temperature.
    code: 'TC-2612-C',
    partNumber: 'HPD-2N140',
    kind: 'tc',
    lots: ['HG2612-C'],
    rig: 'TC-01',
    state: 'stressing',
    perLot: 45,
    skip: 77,
    cycles: 20,
    deviation:
      'Temperature cycling started on the 45 spares of HG2612-C left after its HTRB; the other 32 devices follow from the next pull of the lot.',
    dueInH: 3000,
    priority: 2,
  },
  {
    code: 'HTRB-2611-A+1',
    partNumber: 'HPD-2N140',
    kind: 'htrb',
    lots: ['HG2611-A', 'HG2611-B'],
    rig: 'OV-02',
    state: 'booked',
    perLot: 24,
    skip: 77,
    startsInH: 6,
    afterRunsOnRig: true,
    deviation: 'Extended-life monitor of the spares of two passed lots; 48 devices by agreement.',
    dueInH: 2400,
    priority: 1,
  },
];

/** The run's part, rig, lots and plan, when the demo data has them and the rig can take the run; else null (logged). */
async function liveRunTarget(m: EntityManager, s: DemoLiveRun, log: (l: string) => void) {
  const type = await m.findOne(DeviceTypeEntity, { where: { partNumber: s.partNumber } });
  const rig = await m.findOne(RigEntity, { where: { code: s.rig } });
  const lots = await m.find(LotEntity, { where: { code: In(s.lots) }, order: { code: 'ASC' } });
  if (!type || !rig || lots.length !== s.lots.length) return log(`[seed] runs: ${s.code} skipped (demo data missing)`);
  const plans = await m.find(StressPlanEntity, {
    where: { deviceTypeId: type.id, kind: s.kind, current: true },
    order: { createdAt: 'ASC' },
  });
  const plan = plans.find((p) => !/draft/i.test(p.name));
  if (!plan) return log(`[seed] runs: ${s.code} skipped (no ${s.kind} plan for ${s.partNumber})`);
  const sampleSize = s.perLot * lots.length;
  const refusals = rigRefusals(rig, {
    chamberC: plan.chamberC,
    humidityPct: plan.humidityPct,
    biasV: planBiasV(plan),
    sampleSize,
    durationH: plan.durationH,
    readPointsH: plan.readPointsH,
    chamber: chamberNeedsOf(plan),
  });
  if (refusals.length) return log(`[seed] runs: ${s.code} skipped: ${refusals.join(' ')}`);
  const busy = await m.count(RunEntity, { where: { rigId: rig.id, state: In([...ON_RIG_STATES]) } });
  if (busy && s.state !== 'booked') return log(`[seed] runs: ${s.code} skipped (${rig.code} is in use)`);
  return { rig, lots, plan, sampleSize };
}

async function insertLiveRun(
  m: EntityManager,
  s: DemoLiveRun,
  engineer: UserEntity | null,
  operator: UserEntity | null,
  log: (l: string) => void,
) {
  const target = await liveRunTarget(m, s, log);
  if (!target) return;
  const { rig, lots, plan, sampleSize } = target;
  const timing = timingFrom(configFromEnv());
  const now = Date.now();
  // A temperature-cycling run's hours are its cycles × the profile's period (the plan's hour measure).
  const hours = s.stressHours ?? (plan.thermalCycle && s.cycles ? tcCyclesToH(plan.thermalCycle, s.cycles) : 0);
  let startMs =
    s.state === 'booked' ? now + (s.startsInH ?? 6) * timing.msPerClockH : now - (hours + timing.heatingAllowanceH) * timing.msPerClockH;
  if (s.state === 'booked' && s.afterRunsOnRig) {
    const onRig = await m.find(RunEntity, { where: { rigId: rig.id, state: In([...ON_RIG_STATES]) } });
    for (const r of onRig) if (r.scheduledEnd) startMs = Math.max(startMs, r.scheduledEnd.getTime() + timing.msPerClockH);
  }
  const endMs = startMs + runDurationMs(plan, timing);
  const rps = [...plan.readPointsH].sort((a, b) => a - b);
  const started = s.state === 'heating' || s.state === 'stressing';
  const short = sampleShortfall(plan.sampleSize, sampleSize, s.lots.length);
  const sample = await m.save(
    m.create(SampleEntity, {
      planId: plan.id,
      plannedSize: plan.sampleSize,
      bookedSize: sampleSize,
      deviationReason: short ? (s.deviation ?? 'Demo run booked smaller than its plan.') : null,
      deviationById: short ? (engineer?.id ?? null) : null,
      deviationAt: short ? new Date(now) : null,
      createdById: engineer?.id ?? null,
    }),
  );
  const run = await m.save(
    m.create(RunEntity, {
      sampleId: sample.id,
      code: s.code,
      planId: plan.id,
      rigId: rig.id,
      state: s.state,
      sampleSize,
      scheduledStart: new Date(startMs),
      scheduledEnd: new Date(endMs),
      startedAt: started ? new Date(startMs) : null,
      stateChangedAt: new Date(started ? now - hours * timing.msPerClockH : now),
      stressHours: hours,
      cyclesDone: s.cycles ?? 0,
      nextReadPoint: Math.max(firstReadPointIndex(plan.readPointsH), rps.filter((h) => h <= hours).length),
      heatingSince: started ? new Date(s.state === 'heating' ? now : startMs) : null,
      ambientReachedAt: s.state === 'stressing' ? new Date(startMs + timing.heatingAllowanceH * timing.msPerClockH) : null,
      createdById: engineer?.id ?? null,
      dueAt: s.dueInH === undefined ? null : new Date(now + s.dueInH * timing.msPerClockH),
      priority: s.priority ?? DEFAULT_PRIORITY,
    }),
  );
  await m.insert(
    RunLotEntity,
    lots.map((l) => ({ runId: run.id, lotId: l.id })),
  );
  // Through the audit log's single writer, so the seeded entries are chained like any other.
  const auditLog = new AuditService(m.connection);
  const audit = (actor: UserEntity | null, action: string, details: Record<string, unknown>) =>
    auditLog.record({ actor: actor ?? 'system', action, entity: 'run', entityId: run.id, details: { seeded: true, ...details } }, m);
  await audit(engineer, 'run.book', {
    code: s.code,
    rig: rig.code,
    sampleSize,
    sampleId: sample.id,
    lots: lots.map((l) => l.code),
    planName: plan.name,
    planVersion: plan.version,
  });
  if (short) {
    await auditLog.record(
      {
        actor: engineer ?? 'system',
        action: 'sample.deviation',
        entity: 'sample',
        entityId: sample.id,
        reason: sample.deviationReason,
        details: { seeded: true, plannedSize: plan.sampleSize, bookedSize: sampleSize, runs: [s.code] },
      },
      m,
    );
  }
  if (s.state === 'booked') return;

  const devices: DeviceEntity[] = [];
  for (const l of lots)
    devices.push(...(await m.find(DeviceEntity, { where: { lotId: l.id }, order: { serial: 'ASC' }, skip: s.skip, take: s.perLot })));
  const load = devices.slice(0, Math.min(s.loaded ?? devices.length, rig.socketCount));
  await m.insert(
    RunSocketEntity,
    load.map((d, i) => ({ runId: run.id, deviceId: d.id, socketIndex: i, accruedHours: hours, cyclesDone: s.cycles ?? 0 })),
  );
  await audit(operator, 'run.load', { from: 'booked', to: 'loading', loaded: load.length, needed: sampleSize });
  if (started) await audit(operator, 'run.start', { from: 'loading', to: 'heating', rig: rig.code, setC: plan.chamberC });
  if (s.state === 'stressing') await audit(null, 'run.ambient-reached', { from: 'heating', to: 'stressing' });
}

export async function seedRuns(ds: DataSource, log: (l: string) => void = console.log): Promise<void> {
  await ds.transaction(async (m) => {
    const engineer = await m.findOne(UserEntity, { where: { role: 'engineer' }, order: { createdAt: 'ASC' } });
    const operator = await m.findOne(UserEntity, { where: { role: 'operator' }, order: { createdAt: 'ASC' } });
    for (const s of DEMO_LIVE_RUNS) {
      if (await m.exists(RunEntity, { where: { code: s.code } })) continue;
      await insertLiveRun(m, s, engineer, operator, log);
    }
  });
}
