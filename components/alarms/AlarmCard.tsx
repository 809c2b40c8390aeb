import { View } from 'react-native';
import type { Alarm } from '@/shared/schemas/alarms';
import { formatDateTime } from '@/components/common/format';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { SEVERITY_TONE, alarmNumbers, kindLabel, severityLabel, whereText } from './alarm-format';

interface Props {
  alarm: Alarm;
  canAcknowledge: boolean;
  onAcknowledge: (a: Alarm) => void;
  highlighted?: boolean;
}

/** One alarm: severity (shape + word), where, the numbers, what to do, and who acknowledged it. */
export function AlarmCard({ alarm: a, canAcknowledge, onAcknowledge, highlighted }: Props) {
  const tone = SEVERITY_TONE[a.severity];
  const numbers = alarmNumbers(a.details);
  return (
    <View
      testID={`alarm-${a.id}`}
      accessibilityLabel={`${severityLabel(a.severity)} alarm: ${a.title}`}
      style={{
        backgroundColor: colors.surface,
        borderRadius: radius.md,
        borderWidth: highlighted ? 2 : 1,
        borderColor: highlighted ? colors.ember : colors.border,
        borderLeftWidth: 6,
        borderLeftColor: a.open ? tones[tone].fg : colors.border,
        padding: space.md,
        gap: space.sm,
      }}
    >
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.xs }}>
        <StatusPill tone={tone} label={severityLabel(a.severity)} size="sm" />
        <StatusPill
          tone={a.active ? tone : 'ok'}
          label={a.active ? 'Condition present' : `Cleared ${formatDateTime(a.clearedAt)}`}
          size="sm"
        />
        {a.open ? (
          <StatusPill tone="attention" label="Not acknowledged" size="sm" />
        ) : (
          <StatusPill tone="idle" label="Acknowledged" size="sm" />
        )}
      </View>
      <View style={{ gap: space.xxs }}>
        <Text variant="heading" heading={2}>
          {a.title}
        </Text>
        <Text variant="caption" tone="muted">
          {kindLabel(a)}
          {whereText(a) ? ` · ${whereText(a)}` : ''} · raised {formatDateTime(a.raisedAt)}
          {a.occurrences > 1 ? ` · came back ${a.occurrences - 1}×` : ''} · last seen {formatDateTime(a.lastSeenAt)}
        </Text>
      </View>
      <Text variant="body">{a.message}</Text>
      {a.action ? (
        <View style={{ backgroundColor: colors.surfaceSunken, borderRadius: radius.sm, padding: space.sm, gap: space.xxs }}>
          <Text variant="label">What to do</Text>
          <Text variant="body">{a.action}</Text>
        </View>
      ) : null}
      {numbers.length ? (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, rowGap: space.xxs }} accessibilityLabel="The numbers">
          {numbers.map((n) => (
            <View key={n.label} style={{ minWidth: 150 }}>
              <Text variant="caption" tone="muted">
                {n.label}
              </Text>
              <Text variant="bodyStrong">{n.value}</Text>
            </View>
          ))}
        </View>
      ) : null}
      {a.open ? (
        canAcknowledge ? (
          <View style={{ flexDirection: 'row' }}>
            <Button
              label="Acknowledge…"
              variant={a.severity === 'critical' ? 'primary' : 'secondary'}
              size="sm"
              onPress={() => onAcknowledge(a)}
              accessibilityLabel={`Acknowledge ${a.title}`}
            />
          </View>
        ) : (
          <Text variant="caption" tone="muted">
            Operators, engineers and administrators acknowledge alarms.
          </Text>
        )
      ) : (
        <Text variant="caption" tone="muted">
          Acknowledged by {a.acknowledgedBy?.name ?? 'someone'} on {formatDateTime(a.acknowledgedAt)}
          {a.ackNote ? `: “${a.ackNote}”` : ''}
        </Text>
      )}
    </View>
  );
}
