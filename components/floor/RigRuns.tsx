/**
 * The rig page's runs: the one on the rig (or the next booked one — never "None" while a run is
 * booked here), every upcoming booking, each name a link to its run, and the operator's direct
 * "Load sockets" for a run waiting for its devices.
 */
import { Link, useRouter } from 'expo-router';
import { View } from 'react-native';
import type { FloorTile } from '@/shared/schemas/floor';
import type { Run } from '@/shared/schemas/runs';
import { useCan } from '@/components/queries/auth';
import { useRuns } from '@/components/queries/runs';
import { hours, shortTime } from '@/components/runs/run-look';
import { space, tones } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Text } from '@/components/ui/Text';

/** A run's name as a link to its page. */
export function RunLink({ run }: { run: { id: string; code: string } }) {
  return (
    <Link
      href={{ pathname: '/runs/[id]', params: { id: run.id } }}
      accessibilityLabel={`Open run ${run.code}`}
      style={{ color: tones.info.fg, textDecorationLine: 'underline', fontFamily: 'Lexend_600SemiBold' }}
    >
      {run.code}
    </Link>
  );
}

/** Booked runs on the rig by planned start (the soonest first); the run on the rig is the tile's. */
export function upcomingOnRig<R extends Pick<Run, 'id' | 'code' | 'state' | 'scheduledStart'>>(
  runs: readonly R[],
  currentId: string | null,
): R[] {
  return runs
    .filter((r) => r.state === 'booked' && r.id !== currentId)
    .sort((a, b) => (a.scheduledStart ?? '').localeCompare(b.scheduledStart ?? '') || a.code.localeCompare(b.code));
}

export function RigRuns({ tile }: { tile: FloorTile }) {
  const router = useRouter();
  const may = useCan();
  const runs = useRuns({ open: true, rigId: tile.rigId });
  const current = tile.run;
  const all = runs.data ?? [];
  const upcoming = upcomingOnRig(all, current?.id ?? null);
  const onRig = current ? (all.find((r) => r.id === current.id) ?? null) : null;
  // Loading is offered for the run on the rig while it is being loaded, else (a free rig) for the next booking.
  const toLoad = current ? (current.state === 'loading' ? current : null) : (upcoming[0] ?? null);
  const canLoad = may('run.load') && !!toLoad;
  return (
    <Card title="Runs on this rig" padding="md" testID="rig-runs">
      {current ? (
        <View style={{ gap: space.xxs }} testID="rig-run-now">
          <Text variant="label" tone="muted">
            On the rig now
          </Text>
          <Text variant="body">
            <RunLink run={current} />
            {` · ${onRig?.stateLabel ?? current.state} · ${hours(current.stressHours)} of stress`}
            {onRig ? ` · ${onRig.partNumber}, ${onRig.loadedCount} of ${onRig.sampleSize} loaded` : ''}
          </Text>
        </View>
      ) : (
        <Text variant="body" testID="rig-run-now">
          {upcoming.length
            ? 'Nothing on the rig yet; the next booking is below.'
            : runs.isLoading
              ? 'Loading runs…'
              : 'No run on this rig and none booked.'}
        </Text>
      )}
      {upcoming.length ? (
        <View style={{ gap: space.xxs }} testID="rig-upcoming">
          <Text variant="label" tone="muted">
            {`Booked next (${upcoming.length})`}
          </Text>
          {upcoming.map((r) => (
            <Text key={r.id} variant="body">
              <RunLink run={r} />
              {` · starts ${shortTime(r.scheduledStart)} · ${r.partNumber}, ${r.sampleSize} devices · ${hours(r.targetH)}`}
            </Text>
          ))}
        </View>
      ) : null}
      {canLoad && toLoad ? (
        <View style={{ flexDirection: 'row' }}>
          <Button
            size="sm"
            variant="primary"
            label={`Load sockets of ${toLoad.code}`}
            onPress={() => router.push(`/runs/${toLoad.id}`)}
            testID="rig-load-sockets"
          />
        </View>
      ) : null}
    </Card>
  );
}
