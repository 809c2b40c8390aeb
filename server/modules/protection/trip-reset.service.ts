/**
 * Resetting a protection trip: an operator or engineer says why the socket may be energised again;
 * the plan check is run again for the device in that socket (its own part's ratings against the
 * run's plan) and must not block; the run's record of the trip is cleared and the reset audited
 * with the trip's numbers and the check's; then the rig is told to clear its latch (`reset-trip`)
 * and to bias that socket again with the plan's settings (planBiasSettings).
 *
 * Only while the run is stressing: in any other state the scheduler keeps bias off anyway, and a
 * reset then would re-energise nothing. A software trip is no substitute for the rig's hardware
 * interlocks: the reset clears Emberlot's latch, never an interlock of the rig itself.
 */
import { planBiasSettings } from '../../../shared/scheduling';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { RigCommandAnswer, TripResetInput, TripResetResult } from '../../../shared/schemas/protection';
import type { AppContext } from '../../context';
import { conflict, notFound, unprocessable } from '../../http/errors';
import { toDeviceTypeInput } from '../device-types/device-types.service';
import { runPlanCheck } from '../plans/plan-check-result';
import { toPlanInput } from '../plans/plans.service';
import type { RigCommandBody } from '../telemetry/contracts';
import { clearSocketTrip, tripResetRows } from './protection.data';

/** How long the API waits for each of the rig's two answers. */
const RIG_ANSWER_MS = 5000;

export class TripResetService {
  constructor(private readonly ctx: AppContext) {}

  async reset(actor: SessionUser, runId: string, socket: number, input: TripResetInput): Promise<TripResetResult> {
    const prepared = await this.ctx.ds.transaction(async (m) => {
      const rows = await tripResetRows(m, runId, socket);
      if (!rows) throw notFound('The run');
      const { run, rig, plan, runSocket, tripAlarm } = rows;
      if (!rig || !plan?.deviceType) throw conflict(`Run ${run.code} is not on a rig.`);
      if (run.state !== 'stressing')
        throw conflict(
          `Run ${run.code} is ${run.state}: a trip is reset while the run is stressing, so that the socket can be energised again.`,
        );
      if (!runSocket) throw unprocessable(`Run ${run.code} has no device in socket ${socket} of ${rig.code}.`);
      if (!runSocket.tripped) throw conflict(`Socket ${socket} of ${rig.code} (run ${run.code}) is not tripped.`);
      const type = runSocket.device?.lot?.deviceType ?? plan.deviceType;
      const check = runPlanCheck({ id: type.id, ...toDeviceTypeInput(type) }, toPlanInput(plan), this.ctx.now());
      const findings = check.findings.map((f) => ({ code: f.code, severity: f.severity, title: f.title }));
      if (check.blocking) {
        const blocks = check.findings.filter((f) => f.severity === 'block').map((f) => f.title);
        throw unprocessable(
          `The plan check blocks energising socket ${socket} again (${type.partNumber}): ${blocks.join('; ')}. Revise the plan or take the device out; the trip stays.`,
          { findings },
        );
      }
      await clearSocketTrip(m, run.id, socket);
      await this.ctx.audit.record(
        {
          actor,
          action: 'socket.trip-reset',
          entity: 'run',
          entityId: run.id,
          reason: input.reason,
          details: {
            runCode: run.code,
            rigCode: rig.code,
            socket,
            serial: runSocket.device?.serial ?? null,
            partNumber: type.partNumber,
            trippedAt: runSocket.trippedAt?.toISOString() ?? null,
            tripReason: runSocket.tripReason,
            // The numbers protection tripped on (the alarm's), and the re-check's.
            trip: tripAlarm ? { alarmId: tripAlarm.id, ...tripAlarm.details } : null,
            planCheck: { status: check.status, derived: check.derived, findings: findings.map((f) => `${f.severity}: ${f.code}`) },
          },
        },
        m,
      );
      return {
        result: {
          runId: run.id,
          runCode: run.code,
          rigCode: rig.code,
          socket,
          serial: runSocket.device?.serial ?? '?',
          planCheck: { status: check.status === 'warn' ? ('warn' as const) : ('ok' as const), findings },
        },
        bias: planBiasSettings(toPlanInput(plan)),
      };
    });
    const { result, bias } = prepared;
    // After the commit: a cmdId of its own per reset (the rig applies a cmdId once).
    const tag = `${runId.replace(/-/g, '').slice(0, 12)}:${socket}:${this.ctx.now().getTime().toString(36)}`;
    const resetTrip = await this.send(result.rigCode, `reset:${tag}`, { type: 'reset-trip', socket });
    const energise =
      resetTrip.status === 'confirmed'
        ? await this.send(result.rigCode, `reenergise:${tag}`, { type: 'bias', sockets: [socket], on: true, ...bias })
        : ({ status: 'not-sent', error: 'the latch was not cleared' } satisfies RigCommandAnswer);
    await this.ctx.audit.record({
      actor: 'system',
      action: 'socket.trip-reset.rig',
      entity: 'run',
      entityId: runId,
      details: { rigCode: result.rigCode, socket, resetTrip, bias: energise },
    });
    return { ...result, rig: { resetTrip, bias: energise } };
  }

  private async send(rigCode: string, cmdId: string, cmd: RigCommandBody): Promise<RigCommandAnswer> {
    const link = this.ctx.services.rigLink;
    if (!link) return { status: 'not-sent', error: 'the rig link (MQTT) is not running' };
    try {
      const ack = await link.send(rigCode, cmd, { cmdId, timeoutMs: RIG_ANSWER_MS });
      return ack.ok === false ? { status: 'failed', error: ack.error ?? 'the rig refused' } : { status: 'confirmed' };
    } catch (err) {
      return { status: 'failed', error: err instanceof Error ? err.message : String(err) };
    }
  }
}
