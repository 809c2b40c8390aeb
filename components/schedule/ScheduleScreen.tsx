/**
 * Schedule: which run sits on which rig, and when (a timeline of rigs × time), the open runs as a
 * list, and — for engineers — the booking flow.
 */
import { useRouter } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useCan, useMe } from '@/components/queries/auth';
import { useRuns, useTimeline } from '@/components/queries/runs';
import { RUN_STATE_TONE, hours, shortTime } from '@/components/runs/run-look';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import type { Run } from '@/shared/schemas/runs';
import { BookingPanel } from './BookingPanel';
import { CalendarPanel, DueDatesCard } from './CalendarPanel';
import { Timeline } from './Timeline';

export function ScheduleScreen() {
  const may = useCan();
  const router = useRouter();
  const timeline = useTimeline();
  const me = useMe();
  const runs = useRuns({ open: true });
  const [booking, setBooking] = useState(false);
  const canBook = may('run.book');

  const columns: Column<Run>[] = [
    { key: 'code', title: 'Run', flex: 1.2, card: 'title', render: (r) => r.code },
    {
      key: 'state',
      title: 'State',
      flex: 1.2,
      render: (r) => <StatusPill tone={RUN_STATE_TONE[r.state]} label={r.stateLabel} size="sm" />,
    },
    { key: 'rig', title: 'Rig', flex: 0.7, render: (r) => r.rig?.code ?? '—' },
    {
      key: 'plan',
      title: 'Plan',
      flex: 2,
      card: 'subtitle',
      render: (r) => (
        <Text
          variant="caption"
          tone="muted"
          numberOfLines={1}
        >{`${r.plan.name} (v${r.plan.version}) · ${r.lots.map((l) => l.code).join(', ')}`}</Text>
      ),
    },
    { key: 'hours', title: 'Hours', flex: 1, render: (r) => `${hours(r.stressHours)} / ${hours(r.targetH)}` },
    { key: 'start', title: 'Start', flex: 1, render: (r) => shortTime(r.startedAt ?? r.scheduledStart) },
    {
      key: 'open',
      title: 'Actions',
      titleHidden: true,
      flex: 0.8,
      card: 'actions',
      render: (r) => (
        <Button size="sm" label="Open" accessibilityLabel={`Open run ${r.code}`} onPress={() => router.push(`/runs/${r.id}`)} />
      ),
    },
  ];

  return (
    <Screen width="full" testID="schedule-screen">
      <Header
        eyebrow="Planning"
        title="Schedule"
        subtitle="Which run sits on which rig, and when. Bars move as the rigs report; tap one for the run."
        actions={canBook && !booking ? <Button label="Book a run" variant="primary" onPress={() => setBooking(true)} /> : null}
      />
      {booking ? <BookingPanel onDone={() => setBooking(false)} /> : null}
      <Card
        title="Rigs over time"
        description="Dashed: booked · hatched: maintenance · the ember line is now · a diamond is a run's due date. Drag the track or use the buttons to move and zoom."
      >
        <QueryState
          query={timeline}
          loadingLabel="Loading the schedule"
          errorTitle="The schedule could not be loaded"
          isEmpty={(d) => d.rows.length === 0}
          empty={<EmptyState title="No rigs yet" message="An administrator adds rigs under Rigs; then runs can be booked onto them." />}
        >
          {(d) => (
            <View style={{ gap: space.xs }}>
              <Timeline data={d} userId={me.data?.id} />
              <Text variant="caption" tone="subtle">
                {d.msPerClockH < 3_600_000
                  ? `Demo clock: one stress hour passes in ${+(d.msPerClockH / 1000).toFixed(2)} s, so the axis counts stress-clock time from now.`
                  : 'Times are shown in your time zone.'}
              </Text>
            </View>
          )}
        </QueryState>
      </Card>
      {timeline.data ? <DueDatesCard data={timeline.data} /> : null}
      <CalendarPanel />
      <Card title="Open runs">
        <QueryState
          query={runs}
          loadingLabel="Loading runs"
          errorTitle="The runs could not be loaded"
          isEmpty={(d) => d.length === 0}
          empty={
            <EmptyState
              title="No open runs"
              message={canBook ? 'Book a run to put a plan on a rig.' : 'An engineer books runs; they appear here.'}
            />
          }
        >
          {(d) => <DataTable rows={d} columns={columns} rowKey={(r) => r.id} caption="Open runs" testID="open-runs" />}
        </QueryState>
      </Card>
    </Screen>
  );
}
