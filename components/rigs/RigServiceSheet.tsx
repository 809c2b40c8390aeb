import type { ReactNode } from 'react';
import { Modal, Pressable, ScrollView, View } from 'react-native';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors, radius, shadow, space } from '@/components/theme/tokens';

/**
 * A rig's maintenance and service dates open over the list, where the person pressed the button:
 * a centred sheet on wide screens, a sheet from the bottom on a phone. (Below the table it opened
 * out of view.) Tapping outside or Escape closes it.
 */
export function RigServiceSheet({ title, onClose, children }: { title: string; onClose: () => void; children: ReactNode }) {
  const { gtPhone } = useBreakpoints();
  return (
    <Modal visible transparent animationType="fade" onRequestClose={onClose} {...({ 'aria-label': title } as object)}>
      <View style={{ flex: 1, justifyContent: gtPhone ? 'center' : 'flex-end', alignItems: 'center', padding: gtPhone ? space.lg : 0 }}>
        <Pressable
          accessibilityRole="button"
          accessibilityLabel="Close maintenance"
          onPress={onClose}
          style={{ position: 'absolute', top: 0, left: 0, right: 0, bottom: 0, backgroundColor: colors.scrim }}
        />
        <View
          testID="rig-service-sheet"
          style={[
            {
              width: '100%',
              maxWidth: gtPhone ? 760 : undefined,
              maxHeight: '92%',
              backgroundColor: colors.paper,
              borderRadius: radius.lg,
              borderBottomLeftRadius: gtPhone ? radius.lg : 0,
              borderBottomRightRadius: gtPhone ? radius.lg : 0,
              overflow: 'hidden',
            },
            shadow,
          ]}
        >
          <ScrollView contentContainerStyle={{ padding: gtPhone ? space.md : space.sm, gap: space.md }}>{children}</ScrollView>
        </View>
      </View>
    </Modal>
  );
}
