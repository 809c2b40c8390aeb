import { View } from 'react-native';
import { describeError } from '@/components/queries/api';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { Button } from './Button';
import { StatusShape } from './StatusShape';
import { Text } from './Text';

interface Props {
  error: unknown;
  /** Offered as "Try again"; leave out when retrying cannot help. */
  onRetry?: () => void;
  retrying?: boolean;
  /** What failed, e.g. "Could not load people". */
  title?: string;
  testID?: string;
}

/** A failed load, in words: what failed, why (from the API's message), and a retry. */
export function ErrorState({ error, onRetry, retrying, title = 'Could not load this', testID = 'error-state' }: Props) {
  return (
    <View
      testID={testID}
      accessibilityRole="alert"
      style={{
        alignItems: 'center',
        gap: space.sm,
        paddingVertical: space.xl,
        paddingHorizontal: space.lg,
        borderRadius: radius.lg,
        borderWidth: 1,
        borderColor: tones.danger.edge,
        backgroundColor: colors.surface,
      }}
    >
      <StatusShape tone="danger" size={32} />
      <Text variant="heading" align="center" heading={2}>
        {title}
      </Text>
      <Text variant="body" tone="muted" align="center" style={{ maxWidth: 520 }}>
        {describeError(error)}
      </Text>
      {onRetry ? <Button label="Try again" onPress={onRetry} busy={retrying} busyLabel="Trying again…" /> : null}
    </View>
  );
}
