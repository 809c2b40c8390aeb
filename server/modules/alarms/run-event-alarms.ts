/**
 * Run events (RUN_EVENT, server/events.ts) → alarms, notifications and e-mails:
 * - ambient-not-reached → warning alarm (cleared when the run reaches stressing or ends);
 * - command-failed → critical alarm (cleared on the run's next state change);
 * - read-point-due → in-app notice + e-mail to people with read-point notices on (no alarm);
 * - read-point-overdue → warning alarm (cleared when a held run moves on);
 * - state-changed → clears the alarms the new state makes moot.
 */
import { MEASURE_WITHIN_H } from '../../../shared/domain/standards';
import { formatUtc } from '../../../shared/domain/format';
import type { AppContext } from '../../context';
import type { RunEvent } from '../../events';

const f1 = (x: number | null | undefined) =>
  x === null || x === undefined || !Number.isFinite(x) ? 'n/a' : (Math.round(x * 10) / 10).toFixed(1);
const when = (iso: string) => formatUtc(iso);

export async function handleRunEvent(ctx: AppContext, e: RunEvent): Promise<void> {
  const alarms = ctx.services.alarms;
  const where = e.rigCode ? ` on ${e.rigCode}` : '';
  switch (e.type) {
    case 'ambient-not-reached': {
      await alarms.raise({
        kind: 'ambient-not-reached',
        severity: 'warning',
        rigId: e.rigId,
        runId: e.runId,
        socketIndex: null,
        title: `Run ${e.runCode}${where}: chamber not at temperature`,
        message:
          `The chamber${where} has not come within ${f1(e.lowC)}–${f1(e.highC)} °C (set ${f1(e.setC)} °C) ` +
          `${f1(e.elapsedStressH)} stress hours after heating began (limit ${f1(e.limitH)} h). ` +
          `Last chamber reading: ${e.lastChamberC === null ? 'none' : `${f1(e.lastChamberC)} °C`}.`,
        action: 'Check the oven: door seal, heater, controller and set point. Stress hours do not accrue until the chamber is in band.',
        details: {
          setC: e.setC,
          lowC: e.lowC,
          highC: e.highC,
          lastChamberC: e.lastChamberC,
          elapsedStressH: e.elapsedStressH,
          limitH: e.limitH,
          heatingSince: e.heatingSince,
        },
      });
      return;
    }
    case 'command-failed': {
      await alarms.raise({
        kind: 'command-failed',
        severity: 'critical',
        rigId: e.rigId,
        runId: e.runId,
        socketIndex: null,
        title: `Run ${e.runCode}${where}: ${e.command} command failed`,
        message: `The ${e.command} command for run ${e.runCode}${where} was not confirmed after ${e.attempts} attempts (${e.error}). The rig may not be in the state the run expects.`,
        action: "Check the rig's controller and connection, and what it is actually doing (set point, bias) before the run goes on.",
        details: { cmdId: e.cmdId, command: e.command, attempts: e.attempts, error: e.error },
      });
      return;
    }
    case 'read-point-due': {
      const title = e.final
        ? `Run ${e.runCode}: stress complete at ${f1(e.stressHours)} h — final read point due`
        : `Run ${e.runCode}: read point ${f1(e.readPointH)} h due`;
      const body =
        `Bias was removed${where} at ${when(e.biasRemovedAt)} after ${f1(e.stressHours)} stress hours. ` +
        `Measure the devices by ${when(e.measureBy)} and upload the read-point file.`;
      await ctx.services.notifications.announce({
        audience: 'read-points',
        kind: 'read-point-due',
        title,
        body,
        link: '/readings',
        subject: `[Emberlot] ${title}`,
        mailText: `${body}\n\nRun: ${e.runCode}\n${e.rigCode ? `Rig: ${e.rigCode}\n` : ''}Read point: ${f1(e.readPointH)} h\n\nYou get these e-mails because read-point notices are on in your account settings.`,
      });
      return;
    }
    case 'read-point-overdue': {
      const which = e.final ? `final read point (${f1(e.readPointH)} h)` : `read point ${f1(e.readPointH)} h`;
      await alarms.raise({
        kind: 'read-point-overdue',
        severity: 'warning',
        rigId: e.rigId,
        runId: e.runId,
        socketIndex: null,
        title: `Run ${e.runCode}: ${which} not measured within ${MEASURE_WITHIN_H} h`,
        message:
          `Bias came off${where} at ${when(e.biasRemovedAt)}; the devices were to be measured by ${when(e.measureBy)} ` +
          `and no measurements for this read point have been uploaded (${f1(e.overdueH)} h late).`,
        action: `Measure and upload now, and record the delay in the run: the test standard (JESD22-A108) expects electrical tests within ${MEASURE_WITHIN_H} h of removing bias, and parametric drift may relax with the time off stress.`,
        details: { readPointH: e.readPointH, final: e.final, biasRemovedAt: e.biasRemovedAt, measureBy: e.measureBy, overdueH: e.overdueH },
      });
      return;
    }
    case 'state-changed': {
      if (e.from === 'read-hold') await alarms.clear('read-point-overdue', e.rigId, null, { runState: e.to }, e.runId);
      if (e.to === 'stressing' || e.to === 'finished' || e.to === 'aborted') {
        await alarms.clear('ambient-not-reached', e.rigId, null, { runState: e.to });
      }
      await alarms.clear('command-failed', e.rigId, null, { runState: e.to });
      return;
    }
  }
}
