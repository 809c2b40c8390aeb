import { useContext, type ReactNode } from 'react';
import { View } from 'react-native';
import { Text } from '@/components/ui/Text';
import { space } from '@/components/theme/tokens';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { NotificationBell } from '@/components/alarms/NotificationBell';
import { InShell } from '@/components/shell/ShellContext';

interface Props {
  title: string;
  /** One sentence on what this screen is for. */
  subtitle?: string;
  /** Small line above the title, e.g. the lab or the lot code. */
  eyebrow?: string;
  /** Buttons; beside the title from tablet width, below it on a phone. */
  actions?: ReactNode;
}

export function Header({ title, subtitle, eyebrow, actions }: Props) {
  const { gtPhone } = useBreakpoints();
  // Signed in, every page header carries the notification bell at its top right: it scrolls with
  // the page instead of floating over it. On a phone the title keeps clear of the bell and its count.
  const bell = useContext(InShell) ? <NotificationBell /> : null;
  return (
    <View
      style={{
        flexDirection: gtPhone ? 'row' : 'column',
        alignItems: gtPhone ? 'flex-end' : 'stretch',
        justifyContent: 'space-between',
        gap: space.md,
        zIndex: 10, // the bell's list opens over the content below
      }}
    >
      {bell && !gtPhone ? <View style={{ position: 'absolute', top: 0, right: 0, zIndex: 10 }}>{bell}</View> : null}
      <View style={{ flexShrink: 1, gap: space.xxs, paddingRight: bell && !gtPhone ? 64 : 0 }}>
        {eyebrow ? (
          <Text variant="overline" tone="subtle">
            {eyebrow}
          </Text>
        ) : null}
        <Text variant={gtPhone ? 'display' : 'title'} heading={1}>
          {title}
        </Text>
        {subtitle ? (
          <Text variant="body" tone="muted" style={{ maxWidth: 640 }}>
            {subtitle}
          </Text>
        ) : null}
      </View>
      {actions || (bell && gtPhone) ? (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.xs }}>
          {actions}
          {gtPhone ? bell : null}
        </View>
      ) : null}
    </View>
  );
}
