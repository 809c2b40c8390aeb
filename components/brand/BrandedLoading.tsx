import { ActivityIndicator, View } from 'react-native';
import { colors, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import { BrandMark } from './BrandMark';

/** Full-window wait with the mark, used while fonts load and while the session is checked. */
export function BrandedLoading({ label = 'Opening Emberlot…' }: { label?: string }) {
  return (
    <View
      accessibilityRole="progressbar"
      accessibilityLabel={label}
      style={{ flex: 1, alignItems: 'center', justifyContent: 'center', gap: space.md, backgroundColor: colors.paper }}
    >
      <BrandMark size={56} />
      {/* The wrapper is the named progressbar; the spinner inside is decoration (axe: aria-progressbar-name). */}
      <ActivityIndicator color={colors.ember} aria-hidden />
      <Text variant="label" tone="muted">
        {label}
      </Text>
    </View>
  );
}
