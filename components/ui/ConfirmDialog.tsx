import type { ReactNode } from 'react';
import { Modal, Pressable, View } from 'react-native';
import { colors, radius, shadow, space } from '@/components/theme/tokens';
import { Button } from './Button';
import { Text } from './Text';

interface Props {
  visible: boolean;
  title: string;
  message?: string;
  children?: ReactNode;
  confirmLabel: string;
  /** danger for destructive steps (deactivate, abort a run). */
  confirmVariant?: 'primary' | 'danger';
  onConfirm: () => void;
  onCancel: () => void;
  busy?: boolean;
  confirmDisabled?: boolean;
  testID?: string;
}

/** A centred dialog that asks before a step that matters. Tapping outside cancels. */
export function ConfirmDialog({
  visible,
  title,
  message,
  children,
  confirmLabel,
  confirmVariant = 'primary',
  onConfirm,
  onCancel,
  busy,
  confirmDisabled,
  testID,
}: Props) {
  return (
    // On web the Modal element itself is the dialog; it takes its accessible name from the title.
    <Modal visible={visible} transparent animationType="fade" onRequestClose={onCancel} {...({ 'aria-label': title } as object)}>
      <View style={{ flex: 1, justifyContent: 'center', alignItems: 'center', padding: space.md }}>
        <Pressable
          accessibilityRole="button"
          accessibilityLabel="Close dialog"
          onPress={busy ? undefined : onCancel}
          style={{ position: 'absolute', top: 0, left: 0, right: 0, bottom: 0, backgroundColor: colors.scrim }}
        />
        <View
          testID={testID}
          style={[
            { width: '100%', maxWidth: 460, backgroundColor: colors.surface, borderRadius: radius.lg, padding: space.lg, gap: space.md },
            shadow,
          ]}
        >
          <Text variant="heading" heading={2}>
            {title}
          </Text>
          {message ? (
            <Text variant="body" tone="muted">
              {message}
            </Text>
          ) : null}
          {children}
          <View style={{ flexDirection: 'row', justifyContent: 'flex-end', flexWrap: 'wrap', gap: space.xs, marginTop: space.xs }}>
            <Button label="Cancel" variant="quiet" onPress={onCancel} disabled={busy} />
            <Button label={confirmLabel} variant={confirmVariant} onPress={onConfirm} busy={busy} disabled={confirmDisabled} />
          </View>
        </View>
      </View>
    </Modal>
  );
}
