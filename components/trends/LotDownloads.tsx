import { useState } from 'react';
import { View } from 'react-native';
import { describeError } from '@/components/queries/api';
import { certificateUrl, lotReportUrl } from '@/components/queries/analytics';
import { useCan } from '@/components/queries/auth';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Text } from '@/components/ui/Text';
import { downloadChecked } from './exportReport';

/**
 * The lot report (PDF with charts, devices, FIT, equipment and signatures; the same data as CSV)
 * and the certificate of conformance, which the server issues only for a passed lot whose verdict
 * a current signature approves for release — otherwise its reason is shown here.
 */
export function LotDownloads({ lotId, lotCode }: { lotId: string; lotCode: string }) {
  const can = useCan();
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState<string | null>(null);
  const get = (what: string, url: string, file: string) => {
    setError(null);
    setBusy(what);
    downloadChecked(url, file)
      .catch((e) => setError(e instanceof Error ? e.message : describeError(e)))
      .finally(() => setBusy(null));
  };
  if (!can('report.lot') && !can('report.certificate')) return null;
  return (
    <Card
      title="Reports"
      description="The lot report (drift charts, devices and dispositions, FIT per mechanism, equipment, signatures) as PDF or CSV; the certificate of conformance once the lot has passed and its verdict is approved for release."
      testID="lot-reports"
    >
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        {can('report.lot') ? (
          <>
            <Button
              size="sm"
              variant="secondary"
              label="Export CSV"
              accessibilityHint="Downloads the lot report for a spreadsheet"
              busy={busy === 'csv'}
              onPress={() => get('csv', lotReportUrl(lotId, 'csv'), `lot-${lotCode}-report.csv`)}
              testID="export-csv"
            />
            <Button
              size="sm"
              variant="secondary"
              label="Export PDF"
              accessibilityHint="Downloads a printable lot report with drift charts and the device list"
              busy={busy === 'pdf'}
              onPress={() => get('pdf', lotReportUrl(lotId, 'pdf'), `lot-${lotCode}-report.pdf`)}
              testID="export-pdf"
            />
          </>
        ) : null}
        {can('report.certificate') ? (
          <Button
            size="sm"
            variant="secondary"
            label="Certificate of conformance"
            accessibilityHint="Downloads the certificate for a passed lot whose verdict is approved for release"
            busy={busy === 'coc'}
            onPress={() => get('coc', certificateUrl(lotId), `lot-${lotCode}-certificate.pdf`)}
            testID="export-certificate"
          />
        ) : null}
      </View>
      {error ? (
        <Text variant="caption" tone="danger" testID="download-error">
          {error}
        </Text>
      ) : null}
    </Card>
  );
}
