/**
 * The run's stored uploads: every file is kept byte for byte (by its SHA-256, in the database) and
 * can be downloaded from its upload record.
 */
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { useRunUploads } from '@/components/queries/measurements';
import { downloadReport } from '@/components/trends/exportReport';
import { colors, space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { QueryState } from '@/components/ui/QueryState';
import { Text } from '@/components/ui/Text';
import { countOf } from '@/shared/domain/format';

export function UploadsPanel({ runId }: { runId: string }) {
  const uploads = useRunUploads(runId);
  return (
    <Card title="Uploaded files of this run" description="Each stored file is kept exactly as it was sent." testID="run-uploads">
      <QueryState
        query={uploads}
        loadingLabel="Loading uploads…"
        errorTitle="Could not load the uploads"
        isEmpty={(l) => l.length === 0}
        empty={<Text tone="muted">No file uploaded for this run yet.</Text>}
      >
        {(list) => (
          <View>
            {list.map((u) => (
              <View
                key={u.id}
                style={{ gap: 2, paddingVertical: space.xs, borderTopWidth: 1, borderColor: colors.border }}
                testID={`upload-${u.id}`}
              >
                <Text variant="label">{`${u.fileName} · ${u.readPointH} h`}</Text>
                <Text variant="caption" tone="muted">
                  {`${countOf(u.rowsStored, 'row')} stored, ${u.rowsRejected} refused · ${u.uploadedByName ?? 'unknown'} · ${formatDateTime(u.createdAt)} · SHA-256 ${u.fileSha256.slice(0, 12)}…`}
                </Text>
                {u.downloadPath ? (
                  <View style={{ flexDirection: 'row' }}>
                    <Button
                      size="sm"
                      variant="quiet"
                      label={`Download ${u.fileName}${u.sizeBytes !== null ? ` (${(u.sizeBytes / 1024).toFixed(1)} kB)` : ''}`}
                      onPress={() => void downloadReport(u.downloadPath!, u.fileName)}
                      testID="upload-download"
                    />
                  </View>
                ) : (
                  <Text variant="caption" tone="muted">
                    Uploaded before files were kept: only its SHA-256 is on record.
                  </Text>
                )}
              </View>
            ))}
          </View>
        )}
      </QueryState>
    </Card>
  );
}
