import { ActivityIndicator, Pressable, View } from 'react-native';
import { colors, radius, space, tones, touch } from '@/components/theme/tokens';
import { Text } from './Text';

interface Props {
  label: string;
  help?: string;
  /** undefined = not known yet (shown as "Not set"). */
  value: boolean | undefined;
  onChange: (next: boolean) => void;
  busy?: boolean;
  disabled?: boolean;
  testID?: string;
}

/** An on/off switch that also says "On" / "Off" in words. */
export function Toggle({ label, help, value, onChange, busy, disabled, testID }: Props) {
  const on = value === true;
  const inactive = disabled || busy;
  return (
    <Pressable
      testID={testID}
      accessibilityRole="switch"
      accessibilityLabel={label}
      accessibilityHint={help}
      accessibilityState={{ checked: on, disabled: inactive, busy }}
      aria-checked={on}
      disabled={inactive}
      onPress={() => onChange(!on)}
      style={{ flexDirection: 'row', alignItems: 'center', gap: space.md, minHeight: touch, opacity: disabled ? 0.5 : 1 }}
    >
      <View style={{ flex: 1, gap: 2 }}>
        <Text variant="bodyStrong">{label}</Text>
        {help ? (
          <Text variant="caption" tone="muted">
            {help}
          </Text>
        ) : null}
      </View>
      <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
        {busy ? <ActivityIndicator size="small" color={colors.inkMuted} /> : null}
        <Text variant="label" tone={on ? 'ok' : 'muted'} style={{ minWidth: 56, textAlign: 'right' }}>
          {value === undefined ? 'Not set' : on ? 'On' : 'Off'}
        </Text>
        <View
          style={{
            width: 48,
            height: 28,
            borderRadius: radius.pill,
            padding: 3,
            backgroundColor: on ? tones.ok.fg : colors.borderStrong,
            alignItems: on ? 'flex-end' : 'flex-start',
          }}
        >
          <View style={{ width: 22, height: 22, borderRadius: radius.pill, backgroundColor: colors.surface }} />
        </View>
      </View>
    </Pressable>
  );
}
