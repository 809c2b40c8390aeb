import type { StreamState } from '@/components/queries/floor';
import { StatusPill } from '@/components/ui/StatusPill';

/** Whether the floor's live stream is up (floor and rig page). Own module: the rig page must not pull in the floor screen. */
export function LiveIndicator({ state }: { state: StreamState }) {
  if (state === 'live') return <StatusPill tone="ok" label="Live" size="sm" testID="floor-live" />;
  if (state === 'polling') return <StatusPill tone="info" label="Refreshing every 2 s" size="sm" testID="floor-live" />;
  return <StatusPill tone="attention" label={state === 'connecting' ? 'Connecting…' : 'Reconnecting…'} size="sm" testID="floor-live" />;
}
