import { Link, type Href } from 'expo-router';
import { Modal, Pressable, View } from 'react-native';
import { useSafeAreaInsets } from 'react-native-safe-area-context';
import { ROLE_LABEL } from '@/shared/roles';
import { NavIcon, type NavIconName } from '@/components/icons/NavIcon';
import type { Me } from '@/components/queries/auth';
import { colors, radius, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import { ACCOUNT_PATH, type Destination } from './destinations';

function SheetRow({ icon, label, active }: { icon: NavIconName; label: string; active?: boolean }) {
  return (
    <View
      style={{
        flexDirection: 'row',
        alignItems: 'center',
        gap: space.md,
        minHeight: 52,
        paddingHorizontal: space.md,
        borderRadius: radius.md,
        backgroundColor: active ? colors.surfaceSunken : 'transparent',
      }}
    >
      <NavIcon name={icon} color={colors.ink} accent={active ? colors.ember : colors.ink} />
      <Text variant="bodyStrong" style={{ flex: 1 }}>
        {label}
      </Text>
      {active ? (
        <Text variant="caption" tone="muted">
          You are here
        </Text>
      ) : null}
    </View>
  );
}

interface Props {
  visible: boolean;
  onClose: () => void;
  user: Me;
  overflow: Destination[];
  isActive: (path: string) => boolean;
  onSignOut: () => void;
  signingOut: boolean;
}

/** The phone's "More" sheet: places that did not fit in the tab bar, your account, sign-out. */
export function MoreSheet({ visible, onClose, user, overflow, isActive, onSignOut, signingOut }: Props) {
  const insets = useSafeAreaInsets();
  const links: { path: string; label: string; icon: NavIconName }[] = [
    ...overflow,
    { path: ACCOUNT_PATH, label: 'Your account', icon: 'account' },
  ];
  return (
    <Modal visible={visible} transparent animationType="slide" onRequestClose={onClose} {...({ 'aria-label': 'More places' } as object)}>
      <View style={{ flex: 1, justifyContent: 'flex-end' }}>
        <Pressable
          accessibilityRole="button"
          accessibilityLabel="Close menu"
          onPress={onClose}
          style={{ position: 'absolute', top: 0, left: 0, right: 0, bottom: 0, backgroundColor: colors.scrim }}
        />
        <View
          style={{
            backgroundColor: colors.surface,
            borderTopLeftRadius: radius.lg + 4,
            borderTopRightRadius: radius.lg + 4,
            paddingTop: space.sm,
            paddingHorizontal: space.md,
            paddingBottom: insets.bottom + space.md,
            gap: space.xs,
          }}
        >
          <View
            style={{
              alignSelf: 'center',
              width: 40,
              height: 4,
              borderRadius: radius.pill,
              backgroundColor: colors.borderStrong,
              marginBottom: space.xs,
            }}
          />
          <View style={{ paddingHorizontal: space.md, paddingBottom: space.xs }}>
            <Text variant="bodyStrong">{user.name}</Text>
            <Text variant="caption" tone="muted">
              {ROLE_LABEL[user.role]} · {user.email}
            </Text>
          </View>
          {links.map((l) => (
            <Link key={l.path} href={l.path as Href} asChild>
              <Pressable accessibilityRole="link" accessibilityLabel={l.label} onPress={onClose}>
                <SheetRow icon={l.icon} label={l.label} active={isActive(l.path)} />
              </Pressable>
            </Link>
          ))}
          <View style={{ height: 1, backgroundColor: colors.border, marginVertical: space.xs }} />
          <Pressable accessibilityRole="button" accessibilityLabel="Sign out" disabled={signingOut} onPress={onSignOut}>
            <SheetRow icon="signout" label={signingOut ? 'Signing out…' : 'Sign out'} />
          </Pressable>
        </View>
      </View>
    </Modal>
  );
}
