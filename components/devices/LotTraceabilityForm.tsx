import { useState } from 'react';
import { View } from 'react-native';
import { lotPatchSchema, type LotDetail } from '@/shared/schemas/devices';
import { describeError, isApiError } from '@/components/queries/api';
import { useUpdateLot } from '@/components/queries/lots';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { TraceabilityFields, type TraceValues } from './TraceabilityFields';

/** The edit form of a lot's traceability fields (validated with the API's own schema). */
export function LotTraceabilityForm({ lot, onSaved, onCancel }: { lot: LotDetail; onSaved: () => void; onCancel: () => void }) {
  const [values, setValues] = useState<TraceValues>({ waferLot: lot.waferLot, assemblyLot: lot.assemblyLot, dieRevision: lot.dieRevision });
  const [errors, setErrors] = useState<Partial<Record<string, string>>>({});
  const update = useUpdateLot(lot.id);

  const save = () => {
    const parsed = lotPatchSchema.safeParse(values);
    if (!parsed.success) {
      const next: Record<string, string> = {};
      for (const i of parsed.error.issues) next[String(i.path[0])] ??= i.message;
      setErrors(next);
      return;
    }
    setErrors({});
    update.mutate(parsed.data, {
      onSuccess: onSaved,
      onError: (e) => {
        if (isApiError(e) && e.fields) setErrors(e.fieldErrors());
      },
    });
  };

  return (
    <View style={{ gap: space.sm }}>
      {update.isError && !(isApiError(update.error) && update.error.fields) ? (
        <Banner tone="danger" title="Not saved">
          {describeError(update.error)}
        </Banner>
      ) : null}
      <TraceabilityFields
        values={values}
        onChange={{
          waferLot: (v) => setValues((x) => ({ ...x, waferLot: v })),
          assemblyLot: (v) => setValues((x) => ({ ...x, assemblyLot: v })),
          dieRevision: (v) => setValues((x) => ({ ...x, dieRevision: v })),
        }}
        errors={errors}
      />
      <View style={{ flexDirection: 'row', gap: space.xs }}>
        <Button
          label="Save traceability"
          variant="primary"
          onPress={save}
          busy={update.isPending}
          busyLabel="Saving…"
          testID="lot-trace-save"
        />
        <Button label="Cancel" variant="quiet" onPress={onCancel} disabled={update.isPending} />
      </View>
    </View>
  );
}
