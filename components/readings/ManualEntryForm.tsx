import { MEASURE_WITHIN_H } from '@/shared/domain/standards';
import { CORRECTION_REASON_MIN } from '@/shared/domain/records';
import { useState } from 'react';
import { View } from 'react-native';
import { manualReadingSchema, type ManualReading, type UploadResult } from '@/shared/schemas/measurements';
import { describeError } from '@/components/queries/api';
import { RowsError, useManualEntry } from '@/components/queries/measurements';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { MEASUREMENT_RESULT_LABEL, MEASUREMENT_RESULTS, type MeasurementResult } from '@/shared/evidence';
import { RowOutcomes } from './RowOutcomes';
import { countOf, nounFor } from '@/shared/domain/format';

interface Draft {
  result: MeasurementResult;
  serial: string;
  hfe: string;
  hfeIcMa: string;
  hfeVceV: string;
  icboNa: string;
  icboVcbV: string;
  vcesatMv: string;
  tempC: string;
}

const blank = (prev?: Draft): Draft => ({
  result: 'measured',
  serial: '',
  hfe: '',
  hfeIcMa: prev?.hfeIcMa ?? '',
  hfeVceV: prev?.hfeVceV ?? '5',
  icboNa: '',
  icboVcbV: prev?.icboVcbV ?? '',
  vcesatMv: '',
  tempC: prev?.tempC ?? '25',
});

const MAX_ROWS = 10;

/** A few devices typed in by hand (a re-test, a tester without export). All are stored or none. */
export function ManualEntryForm({ runId, hours }: { runId: string; hours: number }) {
  const entry = useManualEntry();
  const [rows, setRows] = useState<Draft[]>([blank()]);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [result, setResult] = useState<UploadResult | null>(null);
  const [failure, setFailure] = useState<{ message: string; rows?: RowsError['rows'] } | null>(null);
  const [reason, setReason] = useState('');

  const set = <K extends keyof Draft>(i: number, k: K, v: Draft[K]) => {
    setResult(null);
    setRows(rows.map((r, j) => (j === i ? { ...r, [k]: v } : r)));
  };

  const submit = () => {
    setFailure(null);
    const items: ManualReading[] = [];
    const errs: Record<string, string> = {};
    rows.forEach((r, i) => {
      const n = (s: string) => (s.trim() === '' ? Number.NaN : Number(s.replace(',', '.')));
      const parsed = manualReadingSchema.safeParse(
        r.result !== 'measured'
          ? { serial: r.serial, result: r.result, measuredC: n(r.tempC) }
          : {
              serial: r.serial,
              result: r.result,
              hfe: n(r.hfe),
              hfeIcA: n(r.hfeIcMa) / 1000,
              hfeVceV: n(r.hfeVceV),
              icboA: n(r.icboNa) * 1e-9,
              icboVcbV: n(r.icboVcbV),
              vcesatV: n(r.vcesatMv) / 1000,
              measuredC: n(r.tempC),
            },
      );
      // The reason travels with every device; the server keeps it only where one is needed.
      if (parsed.success) items.push(reason.trim() ? { ...parsed.data, reason: reason.trim() } : parsed.data);
      else {
        const map: Record<string, keyof Draft> = {
          serial: 'serial',
          hfe: 'hfe',
          hfeIcA: 'hfeIcMa',
          hfeVceV: 'hfeVceV',
          icboA: 'icboNa',
          icboVcbV: 'icboVcbV',
          vcesatV: 'vcesatMv',
          measuredC: 'tempC',
        };
        for (const issue of parsed.error.issues) {
          const k = map[String(issue.path[0])];
          if (k && !errs[`${i}.${k}`])
            errs[`${i}.${k}`] =
              issue.message.startsWith('Invalid input') || issue.message.includes('NaN') ? 'Enter a number' : issue.message;
        }
      }
    });
    setErrors(errs);
    if (Object.keys(errs).length) return;
    entry.mutate(
      { runId, hours, items },
      {
        onSuccess: (r) => {
          setResult(r);
          setRows([blank(rows[rows.length - 1])]);
        },
        onError: (e) => setFailure({ message: describeError(e), rows: e instanceof RowsError ? e.rows : undefined }),
      },
    );
  };

  const f = (i: number, k: keyof Draft, label: string, numeric = true) => (
    <View style={{ flexGrow: 1, flexBasis: 130 }}>
      <Field
        label={label}
        value={rows[i][k]}
        onChangeText={(v) => set(i, k, v)}
        keyboardType={numeric ? 'numeric' : 'default'}
        autoCapitalize={numeric ? 'none' : 'characters'}
        error={errors[`${i}.${k}`]}
        accessibilityLabel={`Device ${i + 1}: ${label}`}
      />
    </View>
  );

  return (
    <Card
      title="Enter readings by hand"
      description="For a few devices. Units as labelled; everything is stored together or not at all."
      testID="manual-entry"
    >
      <View style={{ gap: space.md }}>
        {rows.map((_, i) => (
          <View key={i} style={{ gap: space.xs }}>
            <Text variant="label">Device {i + 1}</Text>
            <SegmentedChoice
              label={`Device ${i + 1}: result`}
              options={MEASUREMENT_RESULTS.map((k) => ({ value: k, label: MEASUREMENT_RESULT_LABEL[k] }))}
              value={rows[i].result}
              onChange={(v) => set(i, 'result', v)}
              help={
                rows[i].result === 'measured'
                  ? undefined
                  : 'A dead device is stored without values and counts as a failure at this read point.'
              }
            />
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
              {f(i, 'serial', 'Serial', false)}
              {rows[i].result === 'measured' ? (
                <>
                  {f(i, 'hfe', 'hFE')}
                  {f(i, 'hfeIcMa', 'IC for hFE (mA)')}
                  {f(i, 'hfeVceV', 'VCE for hFE (V)')}
                  {f(i, 'icboNa', 'ICBO (nA)')}
                  {f(i, 'icboVcbV', 'VCB for ICBO (V)')}
                  {f(i, 'vcesatMv', 'VCE(sat) (mV)')}
                </>
              ) : null}
              {f(i, 'tempC', 'Temperature (°C)')}
            </View>
            {rows.length > 1 ? (
              <Button size="sm" variant="quiet" label={`Remove device ${i + 1}`} onPress={() => setRows(rows.filter((__, j) => j !== i))} />
            ) : null}
          </View>
        ))}
        <Field
          label="Reason for a correction"
          multiline
          value={reason}
          onChangeText={setReason}
          accessibilityLabel="Manual entry reason"
          help={`Needed when a device already has a reading here (it is kept as an earlier version), and for time zero after Start (an engineer's deviation). At least ${CORRECTION_REASON_MIN} characters.`}
        />
        <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
          <Button
            variant="secondary"
            label="Add a device"
            disabled={rows.length >= MAX_ROWS}
            onPress={() => setRows([...rows, blank(rows[rows.length - 1])])}
          />
          <Button
            variant="primary"
            label={`Store ${countOf(rows.length, 'reading')}`}
            onPress={submit}
            busy={entry.isPending}
            busyLabel="Storing…"
            testID="manual-store"
          />
        </View>
        {failure ? (
          <Banner tone="danger" title="Nothing stored">
            {failure.message}
          </Banner>
        ) : null}
        {failure?.rows ? <RowOutcomes rows={failure.rows} noun="Device" /> : null}
        {result ? (
          <Banner tone="ok" title="Stored">
            {`${result.inserted} new and ${result.replaced} replaced ${nounFor(result.inserted + result.replaced, 'reading')}${result.late ? `; ${result.late} flagged late (more than ${MEASURE_WITHIN_H} h after bias was removed)` : ''}.`}
          </Banner>
        ) : null}
      </View>
    </Card>
  );
}
