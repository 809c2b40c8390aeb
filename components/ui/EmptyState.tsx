import type { ReactNode } from 'react';
import { View } from 'react-native';
import Svg, { Path, Rect } from 'react-native-svg';
import { colors, radius, space } from '@/components/theme/tokens';
import { Text } from './Text';

interface Props {
  title: string;
  message?: string;
  /** Replaces the default drawing (an empty tray). */
  icon?: ReactNode;
  action?: ReactNode;
  testID?: string;
}

export function EmptyState({ title, message, icon, action, testID }: Props) {
  return (
    <View
      testID={testID}
      style={{
        alignItems: 'center',
        gap: space.sm,
        paddingVertical: space.xxl,
        paddingHorizontal: space.lg,
        borderRadius: radius.lg,
        borderWidth: 1,
        borderStyle: 'dashed',
        borderColor: colors.borderStrong,
        backgroundColor: colors.surfaceSunken,
      }}
    >
      {icon ?? (
        <Svg width={56} height={56} viewBox="0 0 56 56" aria-hidden>
          <Rect x={8} y={14} width={40} height={30} rx={6} fill={colors.surface} stroke={colors.borderStrong} strokeWidth={2} />
          <Path d="M8 32h12l3 5h10l3-5h12" stroke={colors.borderStrong} strokeWidth={2} fill="none" strokeLinejoin="round" />
          <Path d="M22 22h12" stroke={colors.ember} strokeWidth={2.5} strokeLinecap="round" />
        </Svg>
      )}
      <Text variant="heading" align="center" heading={2}>
        {title}
      </Text>
      {message ? (
        <Text variant="body" tone="muted" align="center" style={{ maxWidth: 480 }}>
          {message}
        </Text>
      ) : null}
      {action ? <View style={{ marginTop: space.xs }}>{action}</View> : null}
    </View>
  );
}
