import { useState } from 'react';
import { View } from 'react-native';
import type { LotDetail } from '@/shared/schemas/devices';
import { LotTraceabilityForm } from '@/components/forms/LazyForms';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Text } from '@/components/ui/Text';

const NOT_RECORDED = 'not recorded';

/** The lot's wafer lot, assembly lot and die revision; engineers correct them here (audited). */
export function LotTraceabilityCard({ lot, canWrite }: { lot: LotDetail; canWrite: boolean }) {
  const [editing, setEditing] = useState(false);
  const [saved, setSaved] = useState(false);
  const row = (label: string, v: string, testID: string) => (
    <View style={{ flexDirection: 'row', gap: space.sm }}>
      <Text variant="caption" tone="muted" style={{ minWidth: 110 }}>
        {label}
      </Text>
      <Text variant="body" testID={testID}>
        {v || NOT_RECORDED}
      </Text>
    </View>
  );
  return (
    <Card
      title="Traceability"
      description="Where the devices came from: printed on the lot report and the certificate of conformance."
      testID="lot-traceability"
    >
      {saved && !editing ? <Banner tone="ok">Traceability saved.</Banner> : null}
      {editing ? (
        <LotTraceabilityForm
          lot={lot}
          onSaved={() => {
            setEditing(false);
            setSaved(true);
          }}
          onCancel={() => setEditing(false)}
        />
      ) : (
        <View style={{ gap: space.xs }}>
          {row('Wafer lot', lot.waferLot, 'lot-wafer-value')}
          {row('Assembly lot', lot.assemblyLot, 'lot-assembly-value')}
          {row('Die revision', lot.dieRevision, 'lot-die-value')}
          {canWrite ? (
            <Button
              size="sm"
              variant="secondary"
              label="Edit traceability"
              onPress={() => {
                setSaved(false);
                setEditing(true);
              }}
              testID="lot-trace-edit"
            />
          ) : null}
        </View>
      )}
    </Card>
  );
}
