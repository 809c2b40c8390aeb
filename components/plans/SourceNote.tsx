import { View } from 'react-native';
import { sourceParts } from '@/shared/domain/source-words';
import { radius, space, tones } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';

/**
 * Where a template's number comes from, in words: published and common-practice sources as a
 * quiet line, a recalled value as a note to check (never the raw "[memory: …]" tag).
 */
export function SourceNote({ source, testID }: { source: string; testID?: string }) {
  const parts = sourceParts(source);
  const plain = parts.filter((p) => p.kind !== 'recalled').map((p) => p.text);
  const recalled = parts.filter((p) => p.kind === 'recalled');
  return (
    <View style={{ gap: 2 }} testID={testID}>
      {plain.length ? (
        <Text variant="caption" tone="subtle">
          {plain.join('; ')}
        </Text>
      ) : null}
      {recalled.map((p) => (
        <View
          key={p.text}
          style={{
            alignSelf: 'flex-start',
            maxWidth: '100%',
            paddingHorizontal: space.xs,
            paddingVertical: 2,
            borderLeftWidth: 3,
            borderLeftColor: tones.attention.edge,
            backgroundColor: tones.attention.bg,
            borderRadius: radius.sm,
          }}
        >
          <Text variant="caption" style={{ color: tones.attention.fg }}>
            Note: {p.text}
          </Text>
        </View>
      ))}
    </View>
  );
}
