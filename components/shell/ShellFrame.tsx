import { useEffect, useState, type ReactNode } from 'react';
import { View } from 'react-native';
import { router, type Href } from 'expo-router';
import { ROLE_HOME, ROLE_LABEL } from '@/shared/roles';
import { Screen } from '@/components/layout/Screen';
import { useSignOut, type Me } from '@/components/queries/auth';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors } from '@/components/theme/tokens';
import { InShell } from './ShellContext';
import { Button } from '@/components/ui/Button';
import { EmptyState } from '@/components/ui/EmptyState';
import { canOpen, destinationsFor, isActive, splitForPhone, type NavBadges } from './destinations';
import { can } from '@/shared/domain/permissions';
import { useAlarmCounts } from '@/components/queries/alarms';
// The chrome loads in a chunk of its own (nav-kit.ts): sign-in loads this layout but shows no navigation.
import { MoreSheet, SideRail, TabBar } from '@/components/shell/LazyNav';

interface Props {
  /** null while the session is being checked or when nobody is signed in: no navigation is drawn. */
  user: Me | null;
  pathname: string;
  /** Shown instead of the page (session check, redirect). The page stays mounted underneath. */
  cover?: ReactNode;
  children: ReactNode;
}

/**
 * Role-aware chrome: bottom tabs + "More" on phones and tablets, a labelled side rail from 1024 px.
 * The page (the router's <Slot/>) always sits at the same place in the tree and mounts on the first
 * render: a nested navigator that mounts late loses the URL's route and opens its first screen.
 */
export function ShellFrame({ user, pathname, cover, children }: Props) {
  const { gtTablet } = useBreakpoints();
  const [moreOpen, setMoreOpen] = useState(false);
  const signOut = useSignOut();
  const mine = user ? destinationsFor(user.role) : [];
  const { tabs, overflow } = splitForPhone(mine);
  const active = (path: string) => isActive(pathname, path);
  // Open alarms on the Alarms item, for the roles that have the page (no request that would answer 403).
  const alarmCounts = useAlarmCounts(!!user && can(user.role, 'page.alarms'));
  const badges: NavBadges = { '/alarms': alarmCounts.data?.open };

  useEffect(() => setMoreOpen(false), [pathname]);

  const blocked =
    user && !canOpen(user.role, pathname) ? (
      <Screen width="narrow">
        <EmptyState
          testID="not-for-role"
          title="This page belongs to another role"
          message={`Signed in as ${ROLE_LABEL[user.role].toLowerCase()}, you do not have this page. Ask an administrator if your work needs it.`}
          action={<Button label="Go to your start page" variant="primary" onPress={() => router.replace(ROLE_HOME[user.role] as Href)} />}
        />
      </Screen>
    ) : null;
  const over = cover ?? blocked;
  const moreActive = !tabs.some((t) => active(t.path)) && (overflow.some((d) => active(d.path)) || active('/account'));

  return (
    <View style={{ flex: 1, flexDirection: gtTablet ? 'row' : 'column', backgroundColor: colors.paper }}>
      {gtTablet && user ? (
        <SideRail
          user={user}
          destinations={mine}
          pathname={pathname}
          onSignOut={() => signOut.mutate()}
          signingOut={signOut.isPending}
          badges={badges}
        />
      ) : null}
      <View role="main" style={{ flex: 1 }}>
        <View style={[{ flex: 1 }, over ? { display: 'none' } : null]}>
          {/* Page headers show the notification bell inside the shell (components/layout/Header). */}
          <InShell.Provider value={!!user}>{children}</InShell.Provider>
        </View>
        {over}
      </View>
      {!gtTablet && user ? (
        <TabBar tabs={tabs} isActive={active} moreActive={moreActive} onMore={() => setMoreOpen(true)} badges={badges} />
      ) : null}
      {!gtTablet && user ? (
        <MoreSheet
          visible={moreOpen}
          onClose={() => setMoreOpen(false)}
          user={user}
          overflow={overflow}
          isActive={active}
          onSignOut={() => signOut.mutate()}
          signingOut={signOut.isPending}
        />
      ) : null}
    </View>
  );
}
