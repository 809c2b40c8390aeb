import { Columns } from '@/components/layout/Content';
import { Field } from '@/components/ui/Field';

export type TraceKey = 'waferLot' | 'assemblyLot' | 'dieRevision';
export type TraceValues = Record<TraceKey, string>;

/** Wafer lot, assembly lot and die revision: the lot's traceability, for the new-lot and edit forms. */
export function TraceabilityFields({
  values,
  onChange,
  errors,
}: {
  values: TraceValues;
  onChange: Record<TraceKey, (v: string) => void>;
  errors: Partial<Record<string, string>>;
}) {
  return (
    <Columns>
      <Field
        label="Wafer lot"
        value={values.waferLot}
        onChangeText={onChange.waferLot}
        error={errors.waferLot}
        autoCapitalize="characters"
        help="The wafer lot the dice came from (from the traveller)."
        testID="lot-wafer"
      />
      <Field
        label="Assembly lot"
        value={values.assemblyLot}
        onChangeText={onChange.assemblyLot}
        error={errors.assemblyLot}
        autoCapitalize="characters"
        help="The lot the parts were packaged in."
        testID="lot-assembly"
      />
      <Field
        label="Die revision"
        value={values.dieRevision}
        onChangeText={onChange.dieRevision}
        error={errors.dieRevision}
        autoCapitalize="characters"
        help="The die's mask or design revision."
        testID="lot-die-revision"
      />
    </Columns>
  );
}
