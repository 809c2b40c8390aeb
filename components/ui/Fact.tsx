import { View } from 'react-native';
import { Text } from './Text';

/**
 * One labelled figure in a row of facts on a card: a small upper-case label over the value. Facts sit
 * in a wrapping row (`flexDirection: 'row', flexWrap: 'wrap'`) and share it, each at least 150 px wide.
 * The testID goes on the value, so a test reads the figure itself.
 */
export function Fact({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={{ minWidth: 150, flexGrow: 1, flexBasis: 150, gap: 2 }}>
      <Text variant="overline" tone="subtle">
        {label}
      </Text>
      <Text variant="bodyStrong" testID={testID}>
        {value}
      </Text>
    </View>
  );
}
