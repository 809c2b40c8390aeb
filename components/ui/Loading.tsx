import { useEffect, useRef, useState } from 'react';
import { ActivityIndicator, Animated, View } from 'react-native';
import { colors, radius, space } from '@/components/theme/tokens';
import { Text } from './Text';

/** After this long we say so: the request is still running (it times out at 20 s, then errors). */
export const SLOW_AFTER_MS = 6000;

interface Props {
  /** What is loading, e.g. "Loading people…". Always shown: a bare spinner says nothing. */
  label: string;
  /** skeleton = grey rows in the shape of a list; spinner = a centred wheel. */
  variant?: 'spinner' | 'skeleton';
  rows?: number;
  testID?: string;
}

function SkeletonRow({ opacity }: { opacity: Animated.Value }) {
  return (
    <Animated.View
      style={{
        opacity,
        gap: space.xs,
        padding: space.md,
        borderRadius: radius.md,
        backgroundColor: colors.surface,
        borderWidth: 1,
        borderColor: colors.border,
      }}
    >
      <View style={{ height: 14, width: '40%', borderRadius: radius.sm, backgroundColor: colors.paperDeep }} />
      <View style={{ height: 12, width: '70%', borderRadius: radius.sm, backgroundColor: colors.surfaceSunken }} />
    </Animated.View>
  );
}

export function Loading({ label, variant = 'spinner', rows = 3, testID = 'loading' }: Props) {
  const [slow, setSlow] = useState(false);
  const pulse = useRef(new Animated.Value(0.55)).current;
  useEffect(() => {
    const t = setTimeout(() => setSlow(true), SLOW_AFTER_MS);
    const anim = Animated.loop(
      Animated.sequence([
        Animated.timing(pulse, { toValue: 1, duration: 700, useNativeDriver: false }),
        Animated.timing(pulse, { toValue: 0.55, duration: 700, useNativeDriver: false }),
      ]),
    );
    if (variant === 'skeleton') anim.start();
    return () => {
      clearTimeout(t);
      anim.stop();
    };
  }, [pulse, variant]);

  return (
    <View
      testID={testID}
      accessibilityRole="progressbar"
      accessibilityLabel={label}
      accessibilityState={{ busy: true }}
      style={{ gap: space.sm }}
    >
      {variant === 'skeleton' ? (
        <>
          <Text variant="caption" tone="muted">
            {label}
          </Text>
          {Array.from({ length: rows }, (_, i) => (
            <SkeletonRow key={i} opacity={pulse} />
          ))}
        </>
      ) : (
        <View style={{ alignItems: 'center', gap: space.sm, paddingVertical: space.xl }}>
          {/* The wrapper is the progressbar with its name; the wheel itself is decoration. */}
          <ActivityIndicator color={colors.ember} aria-hidden />
          <Text variant="body" tone="muted">
            {label}
          </Text>
        </View>
      )}
      {slow ? (
        <Text variant="caption" tone="subtle" align={variant === 'spinner' ? 'center' : undefined}>
          Still waiting for the server. This can take a few more seconds.
        </Text>
      ) : null}
    </View>
  );
}
