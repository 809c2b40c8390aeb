import { View } from 'react-native';
import { colors, radius, space, tones, type Tone } from '@/components/theme/tokens';
import { StatusShape } from './StatusShape';
import { Text } from './Text';

interface Props {
  tone: Tone;
  /** Always a word or two ("Running", "Tripped", "Deactivated") — never colour alone. */
  label: string;
  size?: 'sm' | 'md';
  testID?: string;
}

/** Tone + shape + text. Use for any state a person must notice: rig, socket, run, account. */
export function StatusPill({ tone, label, size = 'md', testID }: Props) {
  const t = tones[tone];
  return (
    <View
      testID={testID}
      accessibilityRole="text"
      accessibilityLabel={label}
      style={{
        flexDirection: 'row',
        alignItems: 'center',
        alignSelf: 'flex-start',
        // Within its cell: a long label ("Revoked 2026-12-04 09:30") wraps instead of running under the next column.
        maxWidth: '100%',
        gap: space.xs - 2,
        paddingLeft: size === 'sm' ? 6 : space.xs,
        paddingRight: size === 'sm' ? space.xs : space.sm,
        paddingVertical: size === 'sm' ? 2 : space.xxs,
        borderRadius: radius.pill,
        backgroundColor: t.bg,
        borderWidth: 1,
        borderColor: t.edge,
      }}
    >
      <StatusShape tone={tone} size={size === 'sm' ? 12 : 14} />
      <Text variant={size === 'sm' ? 'caption' : 'label'} style={{ color: t.fg, flexShrink: 1 }} numberOfLines={2}>
        {label}
      </Text>
    </View>
  );
}

/** A neutral tag (a role, a plan kind). Not a status: no tone, no shape. */
export function Badge({ label, testID }: { label: string; testID?: string }) {
  return (
    <View
      testID={testID}
      style={{
        alignSelf: 'flex-start',
        // Within its cell: a long label ("Intermittent life") wraps instead of running into the next column.
        maxWidth: '100%',
        paddingHorizontal: space.xs,
        paddingVertical: 2,
        borderRadius: radius.sm,
        backgroundColor: colors.surfaceSunken,
        borderWidth: 1,
        borderColor: colors.border,
      }}
    >
      <Text variant="caption" tone="muted" numberOfLines={2}>
        {label}
      </Text>
    </View>
  );
}
