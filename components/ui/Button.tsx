import type { ReactNode } from 'react';
import { ActivityIndicator, Pressable, View, type StyleProp, type ViewStyle } from 'react-native';
import { colors, radius, space, tones, touch } from '@/components/theme/tokens';
import { Text } from './Text';

export type ButtonVariant = 'primary' | 'secondary' | 'danger' | 'quiet';

interface Props {
  label: string;
  onPress?: () => void;
  variant?: ButtonVariant;
  size?: 'md' | 'sm';
  disabled?: boolean;
  /** Shows a spinner and `busyLabel`, and ignores presses, while a request is in flight. */
  busy?: boolean;
  busyLabel?: string;
  /** Read by screen readers when the visible label needs context ("Deactivate Ada Quill"). */
  accessibilityLabel?: string;
  accessibilityHint?: string;
  icon?: ReactNode;
  fullWidth?: boolean;
  testID?: string;
  style?: StyleProp<ViewStyle>;
}

const look: Record<ButtonVariant, { bg: string; bgPressed: string; fg: string; border: string }> = {
  primary: { bg: colors.ember, bgPressed: colors.emberPressed, fg: colors.inkInverse, border: colors.ember },
  secondary: { bg: colors.surface, bgPressed: colors.surfaceSunken, fg: colors.ink, border: colors.borderStrong },
  danger: { bg: tones.danger.fg, bgPressed: '#861A15', fg: colors.inkInverse, border: tones.danger.fg },
  quiet: { bg: 'transparent', bgPressed: colors.surfaceSunken, fg: colors.ink, border: 'transparent' },
};

export function Button({
  label,
  onPress,
  variant = 'secondary',
  size = 'md',
  disabled = false,
  busy = false,
  busyLabel,
  accessibilityLabel,
  accessibilityHint,
  icon,
  fullWidth,
  testID,
  style,
}: Props) {
  const l = look[variant];
  const inactive = disabled || busy;
  const height = size === 'sm' ? 36 : touch;
  return (
    <Pressable
      testID={testID}
      onPress={inactive ? undefined : onPress}
      disabled={inactive}
      accessibilityRole="button"
      accessibilityLabel={accessibilityLabel ?? label}
      accessibilityHint={accessibilityHint}
      accessibilityState={{ disabled: inactive, busy }}
      style={(state) => {
        const { pressed, hovered, focused } = state as { pressed: boolean; hovered?: boolean; focused?: boolean };
        return [
          {
            minHeight: height,
            paddingHorizontal: size === 'sm' ? space.sm : space.md,
            borderRadius: radius.md,
            borderWidth: 1,
            borderColor: l.border,
            backgroundColor: pressed || hovered ? l.bgPressed : l.bg,
            flexDirection: 'row',
            alignItems: 'center',
            justifyContent: 'center',
            gap: space.xs,
            opacity: disabled ? 0.45 : 1,
            alignSelf: fullWidth ? 'stretch' : 'flex-start',
          } as ViewStyle,
          focused ? ({ outlineColor: colors.focus, outlineWidth: 2, outlineStyle: 'solid', outlineOffset: 2 } as ViewStyle) : null,
          style,
        ];
      }}
    >
      {busy ? <ActivityIndicator size="small" color={l.fg} aria-hidden /> : icon ? <View>{icon}</View> : null}
      <Text variant="label" style={{ color: l.fg }} numberOfLines={1}>
        {busy && busyLabel ? busyLabel : label}
      </Text>
    </Pressable>
  );
}
