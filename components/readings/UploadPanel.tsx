import { useState } from 'react';
import { CORRECTION_REASON_MIN } from '@/shared/domain/records';
import { View } from 'react-native';
import { COLUMN_GUIDE, COLUMN_LABEL, MEASUREMENT_COLUMNS, REQUIRED_COLUMNS, UPLOAD_MAX_BYTES } from '@/shared/domain/measurement-columns';
import { checkSummary } from '@/shared/domain/upload-summary';
import type { UploadResult } from '@/shared/schemas/measurements';
import { formatDateTime } from '@/components/common/format';
import { describeError } from '@/components/queries/api';
import { RowsError, useUploadReadings, type PickedFile } from '@/components/queries/measurements';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { Text } from '@/components/ui/Text';
import { csvHeaders, doubleUsed, guessColumns, missingRequired, toMapping, unitNote, unitProblems, type ColumnChoice } from './csv-header';
import { ColumnSelect } from './ColumnSelect';
import { CsvFilePicker } from './CsvFilePicker';
import { FileDownloads } from './FileDownloads';
import { RowOutcomes } from './RowOutcomes';
import { countOf, nounFor } from '@/shared/domain/format';

const NONE = '__none__';

function Progress({ fraction }: { fraction: number }) {
  const pct = Math.round(fraction * 100);
  return (
    <View
      accessibilityRole="progressbar"
      accessibilityValue={{ min: 0, max: 100, now: pct }}
      accessibilityLabel="Upload progress"
      style={{ gap: 4 }}
    >
      <View style={{ height: 8, borderRadius: radius.pill, backgroundColor: colors.surfaceSunken, overflow: 'hidden' }}>
        <View style={{ width: `${pct}%`, height: 8, backgroundColor: colors.graphite }} />
      </View>
      <Text variant="caption" tone="muted">
        {pct < 100 ? `Sending… ${pct} %` : 'Checking and storing…'}
      </Text>
    </View>
  );
}

/** Pick a tester's CSV, map its columns, choose units, preview every row, then store. */
export function UploadPanel({ runId, hours }: { runId: string; hours: number }) {
  const upload = useUploadReadings();
  const [file, setFile] = useState<PickedFile | null>(null);
  const [headers, setHeaders] = useState<string[]>([]);
  const [choice, setChoice] = useState<ColumnChoice | null>(null);
  const [editColumns, setEditColumns] = useState(false);
  const [tempC, setTempC] = useState('25');
  const [preview, setPreview] = useState<UploadResult | null>(null);
  const [stored, setStored] = useState<UploadResult | null>(null);
  const [progress, setProgress] = useState<number | null>(null);
  const [error, setError] = useState<{ message: string; rows?: RowsError['rows'] } | null>(null);
  const [reason, setReason] = useState('');

  const reset = () => {
    setPreview(null);
    setStored(null);
    setError(null);
    upload.reset();
  };
  const onPick = (f: PickedFile, text: string) => {
    reset();
    if (f.size > UPLOAD_MAX_BYTES) {
      setFile(null);
      setError({
        message: `${f.name} is ${(f.size / 1024 / 1024).toFixed(1)} MB; the limit is ${UPLOAD_MAX_BYTES / 1024 / 1024} MB. Split it by lot or read point.`,
      });
      return;
    }
    const hs = csvHeaders(text);
    const guess = guessColumns(hs);
    setFile(f);
    setHeaders(hs);
    setChoice(guess);
    setEditColumns(missingRequired(guess).length > 0 || Object.keys(unitProblems(guess)).length > 0);
  };

  const temp = Number(tempC);
  const tempError =
    tempC.trim() === '' || !Number.isFinite(temp) || temp < -65 || temp > 300 ? 'Enter a temperature between −65 and 300 °C' : undefined;
  const missing = choice ? missingRequired(choice) : [];
  const doubled = choice ? doubleUsed(choice) : [];
  const badUnits = choice ? unitProblems(choice) : {};
  const ready = !!file && !!choice && !missing.length && !doubled.length && !Object.keys(badUnits).length && !tempError;
  const checked = preview
    ? checkSummary(preview, preview.previousUpload ? formatDateTime(preview.previousUpload.createdAt) : undefined)
    : null;

  const send = (isPreview: boolean) => {
    if (!file || !choice) return;
    setError(null);
    setProgress(isPreview ? null : 0);
    upload.mutate(
      {
        runId,
        hours,
        preview: isPreview,
        file,
        mapping: toMapping(choice),
        defaultTempC: temp,
        reason: reason.trim() || undefined,
        onProgress: isPreview ? undefined : setProgress,
      },
      {
        onSuccess: (r) => {
          setProgress(null);
          if (isPreview) setPreview(r);
          else {
            setStored(r);
            setPreview(null);
          }
        },
        onError: (e) => {
          setProgress(null);
          setError({ message: describeError(e), rows: e instanceof RowsError ? e.rows : undefined });
        },
      },
    );
  };

  return (
    <Card
      title="Upload the tester's file"
      description={`CSV from the parametric tester, one row per device, up to ${UPLOAD_MAX_BYTES / 1024 / 1024} MB.`}
      testID="upload-panel"
    >
      <View style={{ gap: space.md }}>
        <View style={{ gap: space.xxs }} testID="accepted-columns">
          <Text variant="label">Columns the file may have (units go in the header, e.g. “IC (mA)”, “ICBO [nA]”, “VCE(sat)/V”)</Text>
          {MEASUREMENT_COLUMNS.map((c) => (
            <Text key={c} variant="caption" tone="muted">
              {`${COLUMN_LABEL[c]}${REQUIRED_COLUMNS.includes(c) ? '' : ' (optional)'} · ${COLUMN_GUIDE[c].unit}`}
            </Text>
          ))}
        </View>
        <FileDownloads />
        <CsvFilePicker onPick={onPick} disabled={upload.isPending} fileName={file?.name ?? null} />
        {file && choice ? (
          <>
            <View style={{ gap: space.sm }}>
              <Text variant="heading" heading={3}>
                Columns
              </Text>
              <Text variant="caption" tone="muted">
                Which column of the file holds each value. Columns already named like ours are chosen for you.
              </Text>
              {headers.length === 0 ? <Banner tone="danger">The file's first line has no column names.</Banner> : null}
              {!editColumns ? (
                <View style={{ gap: space.xs }}>
                  <Text variant="label" testID="column-summary">
                    {MEASUREMENT_COLUMNS.filter((c) => choice[c])
                      .map((c) => `${COLUMN_LABEL[c].replace(/ \(.*\)$/, '')} ← ${choice[c]}`)
                      .join(' · ')}
                  </Text>
                  <Button size="sm" variant="quiet" label="Change columns" onPress={() => setEditColumns(true)} testID="edit-columns" />
                </View>
              ) : null}
              {!editColumns ? null : (
                <View style={{ gap: space.xs }} testID="column-mapping">
                  {MEASUREMENT_COLUMNS.map((c) => {
                    const required = REQUIRED_COLUMNS.includes(c);
                    const h = choice[c];
                    return (
                      <ColumnSelect
                        key={c}
                        label={`${COLUMN_LABEL[c].replace(/ \(.{5,}\)$/, '')}${required ? '' : ' (optional)'}`}
                        options={[{ value: NONE, label: 'Not in file' }, ...headers.map((x) => ({ value: x, label: x }))]}
                        value={h ?? NONE}
                        onChange={(v) => {
                          reset();
                          setChoice({ ...choice, [c]: v === NONE ? null : v });
                        }}
                        error={
                          required && !h
                            ? 'Choose the column that holds this value'
                            : h && doubled.includes(h)
                              ? 'This column is chosen twice'
                              : badUnits[c]
                        }
                        help={h ? unitNote(c, h) || undefined : undefined}
                        testID={`map-${c}`}
                      />
                    );
                  })}
                </View>
              )}
            </View>
            {!editColumns && Object.keys(badUnits).length ? (
              <Banner tone="danger" title="Units the file does not state" testID="unit-problems">
                {Object.values(badUnits).join(' ')}
              </Banner>
            ) : null}
            <View style={{ gap: space.sm }}>
              <Field
                label="Measurement temperature when the file has none (°C)"
                keyboardType="numeric"
                value={tempC}
                onChangeText={(v) => {
                  reset();
                  setTempC(v);
                }}
                error={tempError}
                help="hFE measured away from the part's reference temperature is referred to it before drift is judged."
              />
              <Field
                label="Reason for a corrected file"
                multiline
                value={reason}
                onChangeText={setReason}
                accessibilityLabel="Upload reason"
                help={`Needed when the file replaces stored readings (they stay as earlier versions), and for time zero after Start (an engineer's deviation). At least ${CORRECTION_REASON_MIN} characters.`}
              />
            </View>
            <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
              <Button
                label="Check every row"
                variant="secondary"
                onPress={() => send(true)}
                disabled={!ready}
                busy={upload.isPending && progress === null}
                busyLabel="Checking…"
                testID="upload-preview"
              />
              <Button
                label={checked ? `Store ${countOf(checked.storable, 'reading')}` : 'Store readings'}
                variant="primary"
                onPress={() => send(false)}
                disabled={!ready || !checked || checked.storable === 0}
                busy={upload.isPending && progress !== null}
                busyLabel="Storing…"
                accessibilityHint="Check the rows first; only rows without problems are stored"
                testID="upload-store"
              />
            </View>
            {missing.length ? (
              <Text variant="caption" tone="danger">
                Still to choose: {missing.map((c) => COLUMN_LABEL[c]).join(', ')}.
              </Text>
            ) : null}
          </>
        ) : null}
        {progress !== null ? <Progress fraction={progress} /> : null}
        {error ? (
          <Banner tone="danger" title="Not stored">
            {error.message}
          </Banner>
        ) : null}
        {error?.rows ? <RowOutcomes rows={error.rows} testID="upload-error-rows" /> : null}
        {preview ? (
          <View style={{ gap: space.sm }} testID="upload-preview-result">
            <Banner tone={preview.rejected ? 'warn' : 'ok'} title="Checked — nothing stored yet">
              {checked?.text}
            </Banner>
            <RowOutcomes rows={preview.rows} testID="upload-preview-rows" />
          </View>
        ) : null}
        {stored ? (
          <View style={{ gap: space.sm }} testID="upload-stored">
            <Banner
              tone={stored.status === 'already-stored' ? 'info' : 'ok'}
              title={stored.status === 'already-stored' ? 'Already stored' : 'Stored'}
            >
              {stored.status === 'already-stored'
                ? stored.notes[0]
                : `${stored.inserted} new and ${stored.replaced} replaced ${nounFor(stored.inserted + stored.replaced, 'reading')} stored; ${countOf(stored.rejected, 'row')} refused${stored.late ? `; ${stored.late} flagged late` : ''}.`}
            </Banner>
            {stored.rejected ? <RowOutcomes rows={stored.rows} /> : null}
          </View>
        ) : null}
      </View>
    </Card>
  );
}
