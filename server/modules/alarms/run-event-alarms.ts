/**
 * Run events (RUN_EVENT, server/events.ts) → alarms, notifications and e-mails:
 * - ambient-not-reached → warning alarm (cleared when the run reaches stressing or ends);
 * - command-failed → critical alarm; the run is in fault when it was running (cleared when the run
 *   leaves the fault state — retried or aborted — or on its next state change otherwise);
 * - read-point-due → in-app notice + e-mail to people with read-point notices on (no alarm);
 * - read-point-overdue → warning alarm (cleared when a held run moves on);
 * - state-changed → clears the alarms the new state makes moot.
 */
import { MEASURE_WITHIN_H } from '../../../shared/domain/standards';
import { formatUtc } from '../../../shared/domain/format';
import type { AppContext } from '../../context';
import type { CommandFailedEvent, RunEvent } from '../../events';
import type { RaiseAlarmInput } from './alarms.service';
import { commandErrorWords } from './command-words';

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
      await alarms.raise(commandFailedAlarm(e));
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
      if (e.to !== 'fault') await alarms.clear('command-failed', e.rigId, null, { runState: e.to });
      return;
    }
  }
}

/**
 * The alarm for a refused or unanswered rig command, in the operator's words: what the rig said,
 * what Emberlot did (the run is in fault, bias off), and one thing to do. The command's internal id
 * stays in the details, out of the text.
 */
export function commandFailedAlarm(e: Omit<CommandFailedEvent, 'at'>): RaiseAlarmInput {
  const where = e.rigCode ? ` on ${e.rigCode}` : '';
  const rig = e.rigCode ?? 'The rig';
  const what = e.command === 'setpoint' ? 'chamber set-point' : e.biasOn === false ? 'bias-off' : 'bias-on';
  const words = commandErrorWords(e.error);
  const happened = e.refused
    ? `${rig} refused the ${what} command for run ${e.runCode}: "${words}".`
    : `${rig} did not confirm the ${what} command for run ${e.runCode} after ${e.attempts} attempts (${words}).`;
  const consequence = e.faulted
    ? ' The run is in fault: Emberlot asks the rig to remove bias from its sockets, and no stress hours count until someone retries after the fix or aborts the run.'
    : ' The rig may not be in the state the run expects.';
  return {
    kind: 'command-failed',
    severity: 'critical',
    rigId: e.rigId,
    runId: e.runId,
    socketIndex: null,
    title: e.faulted
      ? `Run ${e.runCode}${where} in fault: ${what} command ${e.refused ? 'refused' : 'not confirmed'}`
      : `Run ${e.runCode}${where}: ${what} command ${e.refused ? 'refused' : 'not confirmed'}`,
    message: happened + consequence,
    action: e.faulted
      ? "Check at the rig what it is doing (set point, bias) and fix the cause (board fitted, socket count, supply, controller) before choosing Retry after fix on the run page; abort the run if it cannot go on. The rig's hardware interlocks remain the primary protection."
      : "Check at the rig what it is doing (set point, bias) and its controller and connection before the run goes on. The rig's hardware interlocks remain the primary protection.",
    details: {
      cmdId: e.cmdId,
      rigCommand: e.command,
      biasOn: e.biasOn ?? null,
      attempts: e.attempts,
      error: e.error,
      refused: e.refused ?? false,
      runInFault: e.faulted ?? false,
    },
  };
}
