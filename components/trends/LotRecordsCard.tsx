/**
 * Readings of the lot changed after entry (issue #21): the deviations recorded (time zero after
 * Start, a finished run changed, a failure withdrawn) and every version of each corrected reading.
 */
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { readingText } from '@/components/readings/reading-text';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Card } from '@/components/ui/Card';
import { Text } from '@/components/ui/Text';
import { RECORD_DEVIATION_LABEL } from '@/shared/domain/records';
import type { LotDetail } from '@/shared/schemas/analytics';
import { countOf } from '@/shared/domain/format';

export function LotRecordsCard({ lot }: { lot: LotDetail }) {
  const { corrections, deviations } = lot.records;
  if (!corrections.length && !deviations.length) return null;
  return (
    <Card title="Corrected readings" description="Every version stays on record; the verdict uses the current one." testID="lot-records">
      {deviations.length ? (
        <Banner tone="warn" title={`${countOf(deviations.length, 'deviation')} in the records`}>
          {deviations
            .map(
              (d) =>
                `${d.deviation.map((k) => RECORD_DEVIATION_LABEL[k]).join('; ')}: ${d.serial} at ${d.readPointH} h (${d.runCode}) — ${d.reason ?? ''} (${d.enteredByName ?? 'unknown'}, ${formatDateTime(d.recordedAt)})`,
            )
            .join('\n')}
        </Banner>
      ) : null}
      <View style={{ gap: space.xs }}>
        {corrections.map((v) => (
          <Text key={`${v.runCode}-${v.serial}-${v.readPointH}-${v.version}`} variant="caption" tone={v.current ? 'default' : 'muted'}>
            {`${v.serial} at ${v.readPointH} h, version ${v.version}${v.current ? ' (current)' : ' (superseded)'}: ${readingText(v)} · ${v.enteredByName ?? 'unknown'}, ${formatDateTime(v.recordedAt)}${v.reason ? ` · ${v.reason}` : ''}`}
          </Text>
        ))}
      </View>
    </Card>
  );
}
