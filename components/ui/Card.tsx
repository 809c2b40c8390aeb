import type { ReactNode } from 'react';
import { View, type StyleProp, type ViewStyle } from 'react-native';
import { colors, radius, shadow, space } from '@/components/theme/tokens';
import { Text } from './Text';

interface Props {
  children?: ReactNode;
  title?: string;
  /** One line under the title. */
  description?: string;
  /** Controls at the right of the title row. */
  actions?: ReactNode;
  padding?: keyof typeof space;
  style?: StyleProp<ViewStyle>;
  testID?: string;
  accessibilityLabel?: string;
}

export function Card({ children, title, description, actions, padding = 'lg', style, testID, accessibilityLabel }: Props) {
  return (
    <View
      testID={testID}
      accessibilityLabel={accessibilityLabel}
      style={[
        {
          backgroundColor: colors.surface,
          borderRadius: radius.lg,
          borderWidth: 1,
          borderColor: colors.border,
          padding: space[padding],
          gap: space.md,
        },
        shadow,
        style,
      ]}
    >
      {title || actions ? (
        <View style={{ flexDirection: 'row', alignItems: 'flex-start', justifyContent: 'space-between', gap: space.md, flexWrap: 'wrap' }}>
          <View style={{ flexShrink: 1, gap: space.xxs }}>
            {title ? (
              <Text variant="heading" heading={2}>
                {title}
              </Text>
            ) : null}
            {description ? (
              <Text variant="caption" tone="muted">
                {description}
              </Text>
            ) : null}
          </View>
          {actions ? <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>{actions}</View> : null}
        </View>
      ) : null}
      {children}
    </View>
  );
}
