import { View } from 'react-native';
import { space } from '@/components/theme/tokens';
import { Banner } from './Banner';
import { Text } from './Text';

/** The standard caution, word for word wherever high voltage or hot ovens are involved. */
export const SAFETY_CAUTION_LINES = [
  'High voltage and hot surfaces. Devices under stress can burst or smoke.',
  "A software trip is no substitute for the rig's hardware interlocks.",
  "Follow your lab's safety rules and local codes.",
] as const;

interface Props {
  /** One extra, situation-specific line shown first ("Rig R-07 runs at 600 V"). */
  context?: string;
  /** Single paragraph instead of lines, for tight spots such as a dialog. */
  compact?: boolean;
  testID?: string;
}

export function SafetyCaution({ context, compact = false, testID = 'safety-caution' }: Props) {
  return (
    <Banner tone="warn" title="Safety caution" testID={testID}>
      {compact ? (
        <Text variant="caption">{[context, ...SAFETY_CAUTION_LINES].filter(Boolean).join(' ')}</Text>
      ) : (
        <View style={{ gap: space.xxs }}>
          {context ? <Text variant="bodyStrong">{context}</Text> : null}
          {SAFETY_CAUTION_LINES.map((line) => (
            <Text key={line} variant="body">
              {line}
            </Text>
          ))}
        </View>
      )}
    </Banner>
  );
}
