import { useState, type Ref } from 'react';
import { TextInput, View, type TextInputProps } from 'react-native';
import { colors, radius, space, tones, touch, type as typeScale } from '@/components/theme/tokens';
import { Text } from './Text';
import { StatusShape } from './StatusShape';

interface Props extends Omit<TextInputProps, 'style' | 'accessibilityLabel'> {
  label: string;
  /** Shown below in the danger tone with a shape; also marks the input invalid. */
  error?: string;
  /** A quiet line under the input: units, format, why we ask. */
  help?: string;
  /** Overrides the label read by screen readers. */
  accessibilityLabel?: string;
  ref?: Ref<TextInput>;
}

export function Field({ label, error, help, accessibilityLabel, onFocus, onBlur, ...input }: Props) {
  const [focused, setFocused] = useState(false);
  const borderColor = error ? tones.danger.fg : focused ? colors.focus : colors.borderStrong;
  return (
    <View style={{ gap: space.xs }}>
      <Text variant="label" tone="default">
        {label}
      </Text>
      <TextInput
        {...input}
        accessibilityLabel={accessibilityLabel ?? label}
        aria-invalid={error ? true : undefined}
        accessibilityHint={error ?? help}
        placeholderTextColor="#A39B8E"
        onFocus={(e) => {
          setFocused(true);
          onFocus?.(e);
        }}
        onBlur={(e) => {
          setFocused(false);
          onBlur?.(e);
        }}
        style={[
          typeScale.body,
          {
            color: colors.ink,
            minHeight: touch,
            paddingHorizontal: space.sm,
            paddingVertical: space.xs,
            borderRadius: radius.md,
            borderWidth: focused || error ? 2 : 1,
            margin: focused || error ? 0 : 1,
            borderColor,
            backgroundColor: colors.surface,
          },
          // the focus ring is drawn by the border; drop the browser's second outline
          { outlineStyle: 'none' } as object,
        ]}
      />
      {error ? (
        <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center' }} accessibilityLiveRegion="polite">
          <StatusShape tone="danger" size={14} />
          <Text variant="caption" tone="danger" style={{ flexShrink: 1 }}>
            {error}
          </Text>
        </View>
      ) : null}
      {help ? (
        <Text variant="caption" tone="subtle">
          {help}
        </Text>
      ) : null}
    </View>
  );
}
