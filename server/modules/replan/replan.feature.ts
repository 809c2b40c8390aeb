/**
 * Re-planning's background part: a rig going offline or coming back (RIG_STATUS_CHANGED) asks the
 * re-planner for proposals (replan.service.ts). Maintenance windows ask from the rigs service.
 */
import type { AppContext } from '../../context';
import { RIG_STATUS_CHANGED, type RigStatusChanged } from '../../events';
import { formatUtc } from '../../../shared/domain/format';

export function startReplanning(ctx: AppContext, log: (line: string) => void = (l) => console.log(`[replan] ${l}`)): () => void {
  const onStatus = (s: RigStatusChanged) => {
    const trigger = s.online
      ? { kind: 'online' as const, why: `Oven ${s.rigCode} is back online (${formatUtc(s.at)})` }
      : { kind: 'offline' as const, why: `Oven ${s.rigCode} went offline (${formatUtc(s.at)})` };
    ctx.services.replan.enqueue(s.rigId, trigger).then(
      (n) => n && log(`${n} booked run(s) re-proposed: ${trigger.why}`),
      (e: unknown) => log(`re-plan for ${s.rigCode} failed: ${e instanceof Error ? e.message : String(e)}`),
    );
  };
  ctx.events.on(RIG_STATUS_CHANGED, onStatus);
  return () => ctx.events.off(RIG_STATUS_CHANGED, onStatus);
}
