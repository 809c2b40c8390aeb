import { View } from 'react-native';
import Svg, { Path, Rect } from 'react-native-svg';
import { colors, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';

/**
 * The Emberlot mark: a graphite tile (a burn-in board) holding an ember — a flame whose
 * inner cut is a transistor's three legs.
 */
/** `onDark`: a lifted tile with a hairline edge so the mark holds on graphite backgrounds. */
export function BrandMark({ size = 40, onDark = false }: { size?: number; onDark?: boolean }) {
  const tile = onDark ? colors.graphiteRaised : colors.graphite;
  return (
    <Svg width={size} height={size} viewBox="0 0 48 48" accessibilityLabel="Emberlot" role="img">
      <Rect x={0.5} y={0.5} width={47} height={47} rx={11.5} fill={tile} stroke={onDark ? '#57514A' : tile} strokeWidth={1} />
      <Path
        d="M24 8c1.2 5.4 6.5 8.6 8.8 13.2 2.9 5.9.4 13.8-8.8 14.8-9.2-1-11.7-8.9-8.8-14.8 1.3-2.6 3.3-4.3 4.6-6.4.5 2.6 1.4 4 3 5.2C21.6 15.8 22.4 11.6 24 8z"
        fill={colors.ember}
      />
      <Path d="M20.5 29.5v6.5M24 27v9M27.5 29.5v6.5" stroke={tile} strokeWidth={2.2} strokeLinecap="round" />
      <Rect x={12} y={38.5} width={24} height={2.5} rx={1.25} fill="#F5F0E6" opacity={0.85} />
    </Svg>
  );
}

/** The mark with the product name, for the sign-in card and the side rail. */
export function BrandLockup({ size = 40, subtitle }: { size?: number; subtitle?: string }) {
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
      <BrandMark size={size} />
      <View>
        <Text variant={size >= 40 ? 'title' : 'heading'} style={{ color: colors.ink }}>
          Emberlot
        </Text>
        {subtitle ? (
          <Text variant="caption" tone="muted">
            {subtitle}
          </Text>
        ) : null}
      </View>
    </View>
  );
}
