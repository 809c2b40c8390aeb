/**
 * What the socket board shows, in words for the floor: the time of the rig's newest message and,
 * with a run on the rig, the run and its stress hours — never the message's sequence number.
 */
import { formatDateTime } from '@/components/common/format';
import type { FloorTile } from '@/shared/schemas/floor';
import { hours } from '@/components/runs/run-look';

export function boardCaption(sampleAt: string | null, run: Pick<NonNullable<FloorTile['run']>, 'code' | 'stressHours'> | null): string {
  if (!sampleAt) return 'No telemetry from this rig yet.';
  const during = run ? `, run ${run.code} at ${hours(run.stressHours)} of stress` : '';
  return `Readings from ${formatDateTime(sampleAt)} (rig clock)${during}. Tap a socket for its readings.`;
}
