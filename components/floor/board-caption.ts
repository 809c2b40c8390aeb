/**
 * What the socket board shows, in words for the floor: the time of the rig's newest message and,
 * with a run on the rig, the run and its stress hours — never the message's sequence number.
 */
import { formatDateTime } from '@/components/common/format';
import type { FloorBoard } from '@/shared/schemas/floor';
import { hours } from '@/components/runs/run-look';

export function boardCaption(board: Pick<FloorBoard, 'sampleAt' | 'tile'>): string {
  if (!board.sampleAt) return 'No telemetry from this rig yet.';
  const run = board.tile.run;
  const during = run ? `, run ${run.code} at ${hours(run.stressHours)} of stress` : '';
  return `Readings from ${formatDateTime(board.sampleAt)} (rig clock)${during}. Tap a socket for its readings.`;
}
