import { View } from 'react-native';
import { colors, radius } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import { badgeText } from './destinations';

/** The count on a navigation item (open alarms); its words are in the item's accessible name. */
export function NavBadge({ count, onDark = false }: { count: number | undefined; onDark?: boolean }) {
  if (!count) return null;
  return (
    <View
      aria-hidden
      importantForAccessibility="no-hide-descendants"
      testID="nav-badge"
      style={{
        minWidth: 20,
        height: 20,
        paddingHorizontal: 5,
        borderRadius: radius.pill,
        backgroundColor: colors.ember,
        alignItems: 'center',
        justifyContent: 'center',
        borderWidth: onDark ? 0 : 1,
        borderColor: colors.surface,
      }}
    >
      <Text variant="caption" style={{ color: '#FFFFFF', fontSize: 12, lineHeight: 16, fontFamily: 'Lexend_600SemiBold' }}>
        {badgeText(count)}
      </Text>
    </View>
  );
}
