import { useState } from 'react';
import { Pressable, View } from 'react-native';
import { useRouter, type Href } from 'expo-router';
import Svg, { Path } from 'react-native-svg';
import { formatDateTime } from '@/components/common/format';
import { useMarkAllNotificationsRead, useMarkNotificationRead, useNotifications } from '@/components/queries/notifications';
import { colors, radius, shadow, space, tones } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Text } from '@/components/ui/Text';

interface Props {
  /** Icon colour (the shell passes its ink colour). */
  color?: string;
  testID?: string;
}

/**
 * The shell's notification indicator: a bell with the unread count as a number (never a dot alone),
 * opening a short list of the newest notices; choosing one marks it read and follows its link.
 */
export function NotificationBell({ color = colors.ink, testID = 'notification-bell' }: Props) {
  const router = useRouter();
  const [open, setOpen] = useState(false);
  const list = useNotifications(false);
  const markRead = useMarkNotificationRead();
  const markAll = useMarkAllNotificationsRead();
  const unread = list.data?.unread ?? 0;
  const label = unread === 0 ? 'Notifications, none unread' : `Notifications, ${unread} unread`;
  const items = (list.data?.items ?? []).slice(0, 8);

  return (
    <View style={{ position: 'relative' }}>
      <Pressable
        testID={testID}
        accessibilityRole="button"
        accessibilityLabel={label}
        accessibilityState={{ expanded: open }}
        onPress={() => setOpen((v) => !v)}
        style={{ flexDirection: 'row', alignItems: 'center', gap: space.xxs, padding: space.xs, borderRadius: radius.sm }}
      >
        <Svg width={22} height={22} viewBox="0 0 24 24" aria-hidden>
          <Path d="M6 16V11a6 6 0 1 1 12 0v5l1.5 2h-15L6 16z" stroke={color} strokeWidth={1.8} fill="none" strokeLinejoin="round" />
          <Path d="M10 20.5a2 2 0 0 0 4 0" stroke={color} strokeWidth={1.8} fill="none" strokeLinecap="round" />
        </Svg>
        {unread > 0 ? (
          <View
            style={{
              minWidth: 20,
              paddingHorizontal: 5,
              borderRadius: radius.pill,
              backgroundColor: tones.danger.fg,
              alignItems: 'center',
            }}
          >
            <Text variant="caption" style={{ color: colors.inkInverse }}>
              {unread > 99 ? '99+' : String(unread)}
            </Text>
          </View>
        ) : null}
      </Pressable>
      {open ? (
        <View
          testID={`${testID}-panel`}
          style={[
            {
              position: 'absolute',
              top: 40,
              right: 0,
              width: 340,
              maxWidth: 360,
              backgroundColor: colors.surface,
              borderRadius: radius.md,
              borderWidth: 1,
              borderColor: colors.border,
              padding: space.sm,
              gap: space.xs,
              zIndex: 50,
            },
            shadow,
          ]}
        >
          <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center' }}>
            <Text variant="label">Notifications</Text>
            {unread > 0 ? (
              <Button size="sm" variant="quiet" label="Mark all read" onPress={() => markAll.mutate()} busy={markAll.isPending} />
            ) : null}
          </View>
          {list.isLoading ? (
            <Text variant="caption" tone="muted">
              Loading…
            </Text>
          ) : null}
          {list.isError ? (
            <Text variant="caption" tone="danger">
              Could not load notifications.
            </Text>
          ) : null}
          {!list.isLoading && items.length === 0 ? (
            <Text variant="caption" tone="muted">
              Nothing yet. Alarm and read-point notices you subscribe to (under Account) appear here.
            </Text>
          ) : null}
          {items.map((n) => (
            <Pressable
              key={n.id}
              accessibilityRole="button"
              accessibilityLabel={`${n.readAt ? '' : 'Unread: '}${n.title}`}
              onPress={() => {
                if (!n.readAt) markRead.mutate(n.id);
                setOpen(false);
                if (n.link) router.push(n.link as Href);
              }}
              style={({ pressed }) => ({
                padding: space.xs,
                borderRadius: radius.sm,
                backgroundColor: pressed ? colors.surfaceSunken : n.readAt ? 'transparent' : tones.info.bg,
                gap: 2,
              })}
            >
              <Text variant={n.readAt ? 'body' : 'bodyStrong'} numberOfLines={2}>
                {n.readAt ? '' : '● '}
                {n.title}
              </Text>
              <Text variant="caption" tone="muted">
                {n.readAt ? 'Read' : 'Unread'} · {formatDateTime(n.createdAt)}
              </Text>
            </Pressable>
          ))}
        </View>
      ) : null}
    </View>
  );
}
