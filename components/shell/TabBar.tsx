import { Link, type Href } from 'expo-router';
import { Pressable, View } from 'react-native';
import { useSafeAreaInsets } from 'react-native-safe-area-context';
import { NavIcon, type NavIconName } from '@/components/icons/NavIcon';
import { colors, radius, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import { navLabel, type Destination, type NavBadges } from './destinations';
import { NavBadge } from './NavBadge';

function TabInner({ label, icon, active, count }: { label: string; icon: NavIconName; active: boolean; count?: number }) {
  return (
    <>
      <View
        style={{ height: 3, width: 28, borderRadius: radius.pill, backgroundColor: active ? colors.ember : 'transparent', marginBottom: 4 }}
      />
      <View>
        <NavIcon name={icon} color={active ? colors.ink : colors.inkSubtle} accent={active ? colors.ember : colors.inkSubtle} />
        {count ? (
          <View style={{ position: 'absolute', top: -6, left: 14 }}>
            <NavBadge count={count} />
          </View>
        ) : null}
      </View>
      <Text
        variant="caption"
        numberOfLines={1}
        style={{
          color: active ? colors.ink : colors.inkSubtle,
          fontSize: 12,
          fontFamily: active ? 'Lexend_600SemiBold' : 'Lexend_400Regular',
        }}
      >
        {label}
      </Text>
    </>
  );
}

const tabStyle = { flex: 1, alignItems: 'center', paddingBottom: space.xs, minHeight: 56, gap: 2 } as const;

interface Props {
  tabs: Destination[];
  isActive: (path: string) => boolean;
  moreActive: boolean;
  onMore: () => void;
  badges?: NavBadges;
}

/** Bottom navigation on a phone: up to four places (links) and a "More" button. */
export function TabBar({ tabs, isActive, moreActive, onMore, badges = {} }: Props) {
  const insets = useSafeAreaInsets();
  return (
    <View
      role="navigation"
      aria-label="Main"
      style={{
        flexDirection: 'row',
        backgroundColor: colors.surface,
        borderTopWidth: 1,
        borderTopColor: colors.border,
        paddingBottom: insets.bottom,
        paddingHorizontal: space.xxs,
      }}
    >
      {tabs.map((d) => {
        const active = isActive(d.path);
        return (
          <Link key={d.path} href={d.path as Href} asChild>
            <Pressable
              accessibilityRole="link"
              // The full name stays the accessible name; the visible tab word may be shorter.
              accessibilityLabel={navLabel(d.label, badges[d.path])}
              accessibilityState={{ selected: active }}
              aria-current={active ? 'page' : undefined}
              style={tabStyle}
            >
              <TabInner label={d.tabLabel ?? d.label} icon={d.icon} active={active} count={badges[d.path]} />
            </Pressable>
          </Link>
        );
      })}
      <Pressable
        accessibilityRole="button"
        aria-haspopup="dialog"
        accessibilityLabel="More"
        accessibilityHint="Opens the other places, your account and sign-out"
        accessibilityState={{ selected: moreActive }}
        onPress={onMore}
        style={tabStyle}
      >
        <TabInner label="More" icon="more" active={moreActive} />
      </Pressable>
    </View>
  );
}
