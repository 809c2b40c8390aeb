/**
 * The permit to start a run (issue #20 item 7): every check that must pass before Emberlot heats
 * the oven and energises the devices, each failed one naming what is missing. Start refuses while
 * any fails; GET /api/runs/:id/permit shows them first. The checks complement, and never replace,
 * the rig's hardware interlocks and the lab's own permit-to-work rules.
 *
 *   loading     every booked device sits in a socket;
 *   time-zero   every loaded device has a time-zero (0 h) reading in this run (the plan has a 0 h point);
 *   sockets     the rig's own latest telemetry reports every socket the run loaded;
 *   calibration the rig's calibration is recorded and not past due;
 *   interlock   the rig's hardware interlocks were tested within INTERLOCK_TEST_VALID_DAYS;
 *   maintenance no maintenance window is open on the rig now;
 *   oven        the rig is in service, reaches the plan's conditions and no other run holds the
 *               chamber at another condition.
 */
import { In, Not, type EntityManager } from 'typeorm';
import { DRIVEN_STATES } from '../../../shared/domain/run-states';
import { calibrationExpiresAt, chamberSetpointC, INTERLOCK_TEST_VALID_DAYS, interlockDueAt } from '../../../shared/domain/standards';
import { formatUtc } from '../../../shared/domain/format';
import { isPoweredKind, isUnbiasedKind } from '../../../shared/domain/stress';
import { latestChamberSample } from './chamber.data';
import { planBiasV, rigRefusals, sameChamberCondition, when, type RunNeeds } from '../../../shared/scheduling';
import type { PermitCheck, StartPermit } from '../../../shared/schemas/runs';
import { RigMaintenanceEntity, RunEntity, RunSocketEntity, StressPlanEntity, type RigEntity } from '../../db/entities';
import { devicesWithoutTimeZero } from './runs.data';
import { reportedSockets } from './telemetry-reads';

const day = (d: Date) => d.toISOString().slice(0, 10);
const condition = (p: Pick<StressPlanEntity, 'chamberC' | 'chamberBand' | 'humidityPct'>) => {
  const c = `${+chamberSetpointC(p.chamberC, p.chamberBand).toFixed(2)} °C`;
  return p.humidityPct === null ? c : `${c} / ${+p.humidityPct.toFixed(2)} % RH`;
};

/** "0–3", "0–3, 8, 10–12": socket indexes as ranges. */
export function socketRanges(sockets: readonly number[]): string {
  const s = [...new Set(sockets)].sort((a, b) => a - b);
  const out: string[] = [];
  for (let k = 0; k < s.length;) {
    let j = k;
    while (j + 1 < s.length && s[j + 1] === s[j] + 1) j++;
    out.push(j === k ? `${s[k]}` : `${s[k]}–${s[j]}`);
    k = j + 1;
  }
  return out.join(', ');
}

/** A run already in the oven at another chamber condition, as a sentence; null when the chamber is free. */
export async function chamberConflict(m: EntityManager, run: RunEntity, rig: RigEntity, plan: StressPlanEntity): Promise<string | null> {
  const others = await m.find(RunEntity, { where: { rigId: rig.id, state: In([...DRIVEN_STATES]), id: Not(run.id) } });
  for (const o of others) {
    const op = await m.findOneByOrFail(StressPlanEntity, { id: o.planId });
    const same = sameChamberCondition(
      { chamberC: chamberSetpointC(op.chamberC, op.chamberBand), humidityPct: op.humidityPct },
      { chamberC: chamberSetpointC(plan.chamberC, plan.chamberBand), humidityPct: plan.humidityPct },
    );
    if (!same) {
      return `Oven ${rig.code} holds run ${o.code} at ${condition(op)}; this plan needs ${condition(plan)}.`;
    }
  }
  return null;
}

/** The plan's bias in words for the confirmation. */
export function biasText(plan: Pick<StressPlanEntity, 'kind' | 'bias'>): string {
  if (isUnbiasedKind(plan.kind)) return 'no bias (an unbiased chamber stress)';
  const v = planBiasV(plan);
  if (v === null) return 'no bias voltage';
  return isPoweredKind(plan.kind) ? `powered at VCE ${+v.toFixed(2)} V` : `reverse bias of ${+v.toFixed(2)} V`;
}

async function timeZeroCheck(m: EntityManager, run: RunEntity, plan: StressPlanEntity): Promise<PermitCheck> {
  const label = 'Time-zero readings';
  if (!plan.readPointsH.includes(0)) {
    return {
      key: 'time-zero',
      label,
      ok: false,
      message: `Plan "${plan.name}" has no 0 h read point, so no time-zero readings can be stored and drift cannot be judged; add 0 h to its read points (a new plan version).`,
    };
  }
  const loaded = await m.count(RunSocketEntity, { where: { runId: run.id } });
  const missing = await devicesWithoutTimeZero(m, run.id);
  if (!loaded) return { key: 'time-zero', label, ok: false, message: 'No device is loaded yet, so none has a time-zero reading.' };
  if (!missing.length) return { key: 'time-zero', label, ok: true, message: `All ${loaded} loaded devices have a time-zero reading.` };
  const shown = missing.slice(0, 5).map((d) => `${d.serial} (socket ${d.socket_index})`);
  return {
    key: 'time-zero',
    label,
    ok: false,
    message:
      `${missing.length} of ${loaded} loaded devices have no time-zero (0 h) reading: ${shown.join(', ')}${missing.length > 5 ? `, and ${missing.length - 5} more` : ''}. ` +
      'Measure them and store the 0 h readings before stress.',
  };
}

/** A chamber has no sockets to report: it must have reported itself (its air and load temperature). */
async function chamberReportCheck(m: EntityManager, rig: RigEntity): Promise<PermitCheck> {
  const latest = await latestChamberSample(m, rig.id);
  if (!latest) {
    return {
      key: 'sockets',
      label: 'Chamber reports',
      ok: false,
      message: `Chamber ${rig.code} has not reported yet. Switch it on and wait for its first report of air and load temperature.`,
    };
  }
  return {
    key: 'sockets',
    label: 'Chamber reports',
    ok: true,
    message: `Chamber ${rig.code} reported air ${+latest.airC.toFixed(1)} °C, load ${+latest.loadC.toFixed(1)} °C (${formatUtc(latest.ts.getTime())}).`,
  };
}

async function socketsCheck(m: EntityManager, run: RunEntity, rig: RigEntity): Promise<PermitCheck> {
  if (rig.kind === 'chamber') return chamberReportCheck(m, rig);
  const label = 'Sockets the rig reports';
  const loaded = (await m.find(RunSocketEntity, { where: { runId: run.id }, select: { socketIndex: true } })).map((s) => s.socketIndex);
  const report = await reportedSockets(m, rig.id);
  if (!report) {
    return {
      key: 'sockets',
      label,
      ok: false,
      message: `${rig.code} has not reported yet, so Emberlot cannot see which sockets its board has. Switch the rig on and wait for its first telemetry.`,
    };
  }
  const has = new Set(report.sockets);
  const absent = loaded.filter((k) => !has.has(k));
  const reported = `${rig.code} reports ${report.sockets.length} socket${report.sockets.length === 1 ? '' : 's'}${report.sockets.length ? ` (${socketRanges(report.sockets)})` : ''} in its latest telemetry (${formatUtc(report.ts)})`;
  if (!absent.length)
    return { key: 'sockets', label, ok: true, message: `${reported}; all ${loaded.length} loaded sockets are among them.` };
  return {
    key: 'sockets',
    label,
    ok: false,
    message:
      `${reported}; this run loads ${loaded.length} device${loaded.length === 1 ? '' : 's'}, ${absent.length} of them in sockets the rig does not report (${socketRanges(absent)}). ` +
      'Check the board fitted in the oven against the rig registered here, or load the devices onto sockets the rig reports.',
  };
}

function calibrationCheck(rig: RigEntity, nowMs: number): PermitCheck {
  const label = 'Calibration';
  if (!rig.calibrationDueAt) {
    return {
      key: 'calibration',
      label,
      ok: false,
      message: `No calibration is recorded for ${rig.code}. An admin enters its last calibration and the date it is next due on the Rigs page.`,
    };
  }
  const ok = calibrationExpiresAt(rig.calibrationDueAt).getTime() > nowMs;
  return {
    key: 'calibration',
    label,
    ok,
    message: ok
      ? `${rig.code} is calibrated until ${day(rig.calibrationDueAt)}.`
      : `The calibration of ${rig.code} was due on ${day(rig.calibrationDueAt)}. Have it calibrated and record the new due date on the Rigs page.`,
  };
}

function interlockCheck(rig: RigEntity, nowMs: number): PermitCheck {
  const label = 'Interlock test';
  if (!rig.interlockTestedAt) {
    return {
      key: 'interlock',
      label,
      ok: false,
      message: `No interlock test is recorded for ${rig.code}. Test its door, over-temperature and high-voltage interlocks and record the test on the Rigs page.`,
    };
  }
  const due = interlockDueAt(rig.interlockTestedAt);
  const ok = due.getTime() > nowMs;
  return {
    key: 'interlock',
    label,
    ok,
    message: ok
      ? `${rig.code}'s interlocks were tested on ${day(rig.interlockTestedAt)} (valid until ${day(due)}).`
      : `${rig.code}'s interlocks were last tested on ${day(rig.interlockTestedAt)}; a test counts for ${INTERLOCK_TEST_VALID_DAYS} days, so a new one was due by ${day(due)}. Test them and record it on the Rigs page.`,
  };
}

/** Every check of the permit, in the order the screen shows them. */
export async function startPermit(
  m: EntityManager,
  run: RunEntity,
  rig: RigEntity | null,
  plan: StressPlanEntity,
  needs: RunNeeds,
  nowMs: number,
): Promise<StartPermit> {
  const checks: PermitCheck[] = [];
  const loaded = await m.count(RunSocketEntity, { where: { runId: run.id } });
  checks.push({
    key: 'loading',
    label: 'Devices loaded',
    ok: loaded === run.sampleSize,
    message:
      loaded === run.sampleSize
        ? `All ${run.sampleSize} devices are ${rig?.kind === 'chamber' ? 'in the chamber' : 'in sockets'}.`
        : `Load all ${run.sampleSize} devices before starting; ${loaded} ${rig?.kind === 'chamber' ? (loaded === 1 ? 'device is' : 'devices are') : loaded === 1 ? 'socket is' : 'sockets are'} loaded.`,
  });
  checks.push(await timeZeroCheck(m, run, plan));
  if (rig) {
    checks.push(await socketsCheck(m, run, rig));
    checks.push(calibrationCheck(rig, nowMs));
    checks.push(interlockCheck(rig, nowMs));
    const maint = await m.find(RigMaintenanceEntity, { where: { rigId: rig.id } });
    const open = maint.find((x) => x.startsAt.getTime() <= nowMs && x.endsAt.getTime() > nowMs);
    checks.push({
      key: 'maintenance',
      label: 'Maintenance',
      ok: !open,
      message: open
        ? `Oven ${rig.code} is in maintenance until ${when(open.endsAt.getTime())}${open.reason ? ` (${open.reason})` : ''}.`
        : `No maintenance is open on ${rig.code}.`,
    });
    const oven = rigRefusals(rig, needs);
    const clash = await chamberConflict(m, run, rig, plan);
    if (clash) oven.push(clash);
    checks.push({
      key: 'oven',
      label: 'Oven and chamber',
      ok: !oven.length,
      message: oven.length ? oven.join(' ') : `${rig.code} reaches ${condition(plan)} and its chamber is free for it.`,
    });
  } else {
    checks.push({ key: 'oven', label: 'Oven and chamber', ok: false, message: `Run ${run.code} has no rig.` });
  }
  return {
    runId: run.id,
    ok: checks.every((c) => c.ok),
    checks,
    confirm: {
      rigCode: rig?.code ?? null,
      chamberC: plan.chamberC,
      humidityPct: plan.humidityPct,
      biasV: planBiasV(plan),
      biasText: biasText(plan),
    },
  };
}
