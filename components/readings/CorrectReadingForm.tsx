/**
 * A correction of one stored reading: new values (the measuring conditions stay those of the stored
 * reading) and the reason. Loaded through the form kit (it validates with zod).
 */
import { useState } from 'react';
import { View } from 'react-native';
import { describeError } from '@/components/queries/api';
import { useCorrectReading } from '@/components/queries/measurements';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Field } from '@/components/ui/Field';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { CORRECTION_REASON_MIN } from '@/shared/domain/records';
import { MEASUREMENT_RESULT_LABEL, MEASUREMENT_RESULTS, type MeasurementResult } from '@/shared/evidence';
import { correctionSchema, type StoredReading } from '@/shared/schemas/measurements';

interface Draft {
  result: MeasurementResult;
  hfe: string;
  icboNa: string;
  vcesatMv: string;
  reason: string;
}

export function CorrectReadingForm({ reading, onDone }: { reading: StoredReading; onDone: (r: StoredReading) => void }) {
  const correct = useCorrectReading();
  const [d, setD] = useState<Draft>({
    result: reading.result,
    hfe: reading.hfe === null ? '' : String(reading.hfe),
    icboNa: reading.icboA === null ? '' : String(+(reading.icboA * 1e9).toPrecision(6)),
    vcesatMv: reading.vcesatV === null ? '' : String(+(reading.vcesatV * 1000).toPrecision(6)),
    reason: '',
  });
  const [errors, setErrors] = useState<Record<string, string>>({});
  const n = (s: string) => (s.trim() === '' ? Number.NaN : Number(s.replace(',', '.')));

  const submit = () => {
    // The measuring conditions (IC, VCE, VCB, temperature, time) stay those of the stored reading.
    const body =
      d.result === 'measured'
        ? {
            result: d.result,
            hfe: n(d.hfe),
            hfeIcA: reading.hfeIcA,
            hfeVceV: reading.hfeVceV,
            icboA: n(d.icboNa) * 1e-9,
            icboVcbV: reading.icboVcbV,
            vcesatV: n(d.vcesatMv) / 1000,
            bvceoV: reading.bvceoV,
            measuredC: reading.measuredC,
            reason: d.reason,
          }
        : { result: d.result, measuredC: reading.measuredC, reason: d.reason };
    const parsed = correctionSchema.safeParse(body);
    if (!parsed.success) {
      const errs: Record<string, string> = {};
      for (const i of parsed.error.issues) {
        const k = String(i.path[0]);
        if (!errs[k]) errs[k] = i.message.startsWith('Invalid input') || i.message.includes('NaN') ? 'Enter a number' : i.message;
      }
      setErrors(errs);
      return;
    }
    setErrors({});
    correct.mutate({ id: reading.id, body: parsed.data }, { onSuccess: onDone });
  };

  const field = (k: 'hfe' | 'icboNa' | 'vcesatMv', label: string, errKey: string) => (
    <View style={{ flexGrow: 1, flexBasis: 120 }}>
      <Field
        label={label}
        keyboardType="numeric"
        value={d[k]}
        onChangeText={(v) => setD({ ...d, [k]: v })}
        error={errors[errKey]}
        accessibilityLabel={`Corrected ${label}`}
      />
    </View>
  );

  return (
    <View
      style={{ gap: space.sm, padding: space.sm, backgroundColor: colors.surfaceSunken, borderRadius: radius.md }}
      testID="correct-form"
    >
      <Text variant="label">{`Correct ${reading.serial} at ${reading.readPointH} h`}</Text>
      <SegmentedChoice
        label="Result"
        options={MEASUREMENT_RESULTS.map((k) => ({ value: k, label: MEASUREMENT_RESULT_LABEL[k] }))}
        value={d.result}
        onChange={(v) => setD({ ...d, result: v })}
      />
      {d.result === 'measured' ? (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
          {field('hfe', 'hFE', 'hfe')}
          {field('icboNa', 'ICBO (nA)', 'icboA')}
          {field('vcesatMv', 'VCE(sat) (mV)', 'vcesatV')}
        </View>
      ) : null}
      <Field
        label="Reason for the correction"
        multiline
        value={d.reason}
        onChangeText={(v) => setD({ ...d, reason: v })}
        error={errors.reason}
        accessibilityLabel="Correction reason"
        help={`At least ${CORRECTION_REASON_MIN} characters. The stored value stays as an earlier version; your name and the time are recorded.`}
      />
      <View style={{ flexDirection: 'row' }}>
        <Button
          label="Store the correction"
          variant="primary"
          onPress={submit}
          busy={correct.isPending}
          busyLabel="Storing…"
          testID="correct-save"
        />
      </View>
      {correct.isError ? (
        <Banner tone="danger" title="Not corrected">
          {describeError(correct.error)}
        </Banner>
      ) : null}
    </View>
  );
}
