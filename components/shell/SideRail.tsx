import { Link, type Href } from 'expo-router';
import { useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { ROLE_LABEL } from '@/shared/roles';
import { BrandMark } from '@/components/brand/BrandMark';
import { NavIcon, type NavIconName } from '@/components/icons/NavIcon';
import type { Me } from '@/components/queries/auth';
import { colors, radius, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import { ACCOUNT_PATH, isActive, navLabel, type Destination, type NavBadges } from './destinations';
import { NavBadge } from './NavBadge';

const RAIL_WIDTH = 256;
const railInk = '#E9E2D6';
const railMuted = '#B4AB9D';

function RailLink({
  path,
  label,
  icon,
  active,
  count,
}: {
  path: string;
  label: string;
  icon: NavIconName;
  active: boolean;
  count?: number;
}) {
  // Link asChild spreads the child's style into an object: it must be one flat object, not an array or a function.
  const [hovered, setHovered] = useState(false);
  const [focused, setFocused] = useState(false);
  return (
    <Link href={path as Href} asChild>
      <Pressable
        accessibilityRole="link"
        accessibilityLabel={navLabel(label, count)}
        accessibilityState={{ selected: active }}
        aria-current={active ? 'page' : undefined}
        onHoverIn={() => setHovered(true)}
        onHoverOut={() => setHovered(false)}
        onFocus={() => setFocused(true)}
        onBlur={() => setFocused(false)}
        style={StyleSheet.flatten([
          {
            flexDirection: 'row',
            alignItems: 'center',
            gap: space.sm,
            minHeight: 44,
            paddingHorizontal: space.sm,
            borderRadius: radius.md,
            backgroundColor: active ? colors.graphiteRaised : hovered ? '#35312C' : 'transparent',
            borderLeftWidth: 3,
            borderLeftColor: active ? colors.ember : 'transparent',
          },
          focused ? ({ outlineColor: '#8FB4E0', outlineWidth: 2, outlineStyle: 'solid' } as object) : null,
        ])}
      >
        <NavIcon name={icon} color={active ? '#FFFDF8' : railMuted} accent={active ? colors.ember : railMuted} />
        <Text variant="label" style={{ color: active ? '#FFFDF8' : railInk, flex: 1 }}>
          {label}
        </Text>
        <NavBadge count={count} onDark />
      </Pressable>
    </Link>
  );
}

interface Props {
  user: Me;
  destinations: Destination[];
  pathname: string;
  onSignOut: () => void;
  signingOut: boolean;
  badges?: NavBadges;
}

/** The labelled navigation column shown from 1024 px. */
export function SideRail({ user, destinations, pathname, onSignOut, signingOut, badges = {} }: Props) {
  return (
    <View
      role="navigation"
      aria-label="Main"
      style={{ width: RAIL_WIDTH, backgroundColor: colors.graphite, paddingVertical: space.lg, paddingHorizontal: space.md, gap: space.lg }}
    >
      <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm, paddingHorizontal: space.xs }}>
        <BrandMark size={36} onDark />
        <View>
          <Text variant="heading" style={{ color: '#FFFDF8' }}>
            Emberlot
          </Text>
          <Text variant="caption" style={{ color: railMuted }}>
            Harrowgate Power Devices
          </Text>
        </View>
      </View>
      <View style={{ gap: space.xxs, flex: 1 }}>
        {destinations.map((d) => (
          <RailLink key={d.path} path={d.path} label={d.label} icon={d.icon} active={isActive(pathname, d.path)} count={badges[d.path]} />
        ))}
      </View>
      <View style={{ gap: space.xs, borderTopWidth: 1, borderTopColor: '#46413A', paddingTop: space.md }}>
        <View style={{ paddingHorizontal: space.xs, gap: 2 }}>
          <Text variant="label" style={{ color: '#FFFDF8' }} numberOfLines={1}>
            {user.name}
          </Text>
          <Text variant="caption" style={{ color: railMuted }} numberOfLines={1}>
            {ROLE_LABEL[user.role]}
          </Text>
        </View>
        <RailLink path={ACCOUNT_PATH} label="Your account" icon="account" active={isActive(pathname, ACCOUNT_PATH)} />
        <Pressable
          accessibilityRole="button"
          accessibilityLabel="Sign out"
          accessibilityState={{ busy: signingOut, disabled: signingOut }}
          disabled={signingOut}
          onPress={onSignOut}
          style={(state) => [
            {
              flexDirection: 'row',
              alignItems: 'center',
              gap: space.sm,
              minHeight: 44,
              paddingHorizontal: space.sm,
              borderRadius: radius.md,
              borderLeftWidth: 3,
              borderLeftColor: 'transparent',
            },
            (state as { hovered?: boolean }).hovered ? { backgroundColor: '#35312C' } : null,
          ]}
        >
          <NavIcon name="signout" color={railMuted} />
          <Text variant="label" style={{ color: railInk }}>
            {signingOut ? 'Signing out…' : 'Sign out'}
          </Text>
        </Pressable>
      </View>
    </View>
  );
}
