import { useState } from 'react';
import { View } from 'react-native';
import { useLocalSearchParams } from 'expo-router';
import type { Alarm, AlarmSeverityName } from '@/shared/schemas/alarms';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useAlarm, useAlarmCounts, useAlarms } from '@/components/queries/alarms';
import { useCan } from '@/components/queries/auth';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { AcknowledgeDialog } from './AcknowledgeDialog';
import { AlarmCard } from './AlarmCard';

type StatusFilter = 'open' | 'acknowledged' | 'all';
type SeverityFilter = 'any' | AlarmSeverityName;
const PAGE = 50;

const STATUS_CHOICES = [
  { value: 'open' as const, label: 'Open' },
  { value: 'acknowledged' as const, label: 'Acknowledged' },
  { value: 'all' as const, label: 'All' },
];
const SEVERITY_CHOICES = [
  { value: 'any' as const, label: 'Any severity' },
  { value: 'critical' as const, label: 'Critical' },
  { value: 'warning' as const, label: 'Warning' },
  { value: 'info' as const, label: 'Notice' },
];

/** The confirmation after acknowledging: who, when (the server's record) and which alarm. */
export function acknowledgedText(a: Pick<Alarm, 'title' | 'acknowledgedBy' | 'acknowledgedAt'>): string {
  const who = a.acknowledgedBy?.name ?? 'you';
  const when = a.acknowledgedAt ? ` on ${formatDateTime(a.acknowledgedAt)}` : '';
  return `Acknowledged by ${who}${when}: ${a.title}.`;
}

function plural(n: number, one: string, many = `${one}s`) {
  return `${n} ${n === 1 ? one : many}`;
}

/** Alarms: open ones first (most severe first), each with its numbers and what to do; history below. */
export function AlarmsScreen() {
  const params = useLocalSearchParams<{ id?: string }>();
  const linkedId = typeof params.id === 'string' ? params.id : undefined;
  const may = useCan();
  const [status, setStatus] = useState<StatusFilter>('open');
  const [severity, setSeverity] = useState<SeverityFilter>('any');
  const [limit, setLimit] = useState(PAGE);
  const [acking, setAcking] = useState<Alarm | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const alarms = useAlarms({ status, severity: severity === 'any' ? undefined : severity, limit });
  const counts = useAlarmCounts();
  const linked = useAlarm(linkedId);
  const canAck = may('alarm.acknowledge');

  const c = counts.data;
  const summary = c
    ? c.open === 0
      ? 'No open alarms.'
      : `${plural(c.open, 'open alarm')}: ${c.bySeverity.critical} critical, ${c.bySeverity.warning} ${c.bySeverity.warning === 1 ? 'warning' : 'warnings'}, ${c.bySeverity.info} ${c.bySeverity.info === 1 ? 'notice' : 'notices'}; ${c.active} with the condition still present.`
    : null;

  return (
    <Screen width="wide" testID="alarms-screen">
      <Header
        eyebrow="Floor"
        title="Alarms"
        subtitle="What needs a person now: open alarms first, most severe first, each with its numbers and what to do."
      />
      <SafetyCaution context="Burn-in rigs run hot and at high voltage. Emberlot trips a socket heading for thermal runaway, but the rig's hardware interlocks remain the primary protection." />
      {summary ? (
        <Text variant="bodyStrong" accessibilityLiveRegion="polite" testID="alarm-summary">
          {summary}
        </Text>
      ) : null}
      {notice ? (
        <Banner
          tone="ok"
          testID="alarm-ack-notice"
          action={<Button size="sm" variant="quiet" label="Dismiss" onPress={() => setNotice(null)} />}
        >
          {notice}
        </Banner>
      ) : null}
      {linked.data && !(alarms.data?.items ?? []).some((a) => a.id === linked.data!.id) ? (
        <View style={{ gap: space.xs }}>
          <Text variant="label">The alarm you followed</Text>
          <AlarmCard alarm={linked.data} canAcknowledge={canAck} onAcknowledge={setAcking} highlighted />
        </View>
      ) : null}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <SegmentedChoice
          label="Show"
          options={STATUS_CHOICES}
          value={status}
          onChange={(v) => {
            setStatus(v);
            setLimit(PAGE);
          }}
          testID="alarm-status-filter"
        />
        <SegmentedChoice
          label="Severity"
          options={SEVERITY_CHOICES}
          value={severity}
          onChange={(v) => {
            setSeverity(v);
            setLimit(PAGE);
          }}
          testID="alarm-severity-filter"
        />
      </View>
      <QueryState
        query={alarms}
        loadingLabel="Loading alarms…"
        errorTitle="Could not load alarms"
        isEmpty={(d) => d.items.length === 0}
        empty={
          <EmptyState
            title={status === 'open' ? 'Nothing needs attention' : 'No alarms here'}
            message={
              status === 'open'
                ? 'No open alarms. Protection keeps watching every socket; new alarms appear here and by e-mail to people who asked for them.'
                : 'No alarms match these filters.'
            }
          />
        }
      >
        {(d) => (
          <View style={{ gap: space.sm }} accessibilityRole="list">
            {d.items.map((a) => (
              <View key={a.id} role="listitem">
                <AlarmCard alarm={a} canAcknowledge={canAck} onAcknowledge={setAcking} highlighted={a.id === linkedId} />
              </View>
            ))}
            {d.total > d.items.length ? (
              <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
                <Text variant="caption" tone="muted">
                  Showing {d.items.length} of {d.total}.
                </Text>
                <Button size="sm" variant="secondary" label="Show more" onPress={() => setLimit((l) => l + PAGE)} />
              </View>
            ) : null}
          </View>
        )}
      </QueryState>
      <AcknowledgeDialog
        alarm={acking}
        onClose={() => setAcking(null)}
        onDone={(a) => {
          setAcking(null);
          setNotice(acknowledgedText(a));
        }}
      />
    </Screen>
  );
}
