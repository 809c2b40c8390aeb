/**
 * The readings stored at a read point, each with its version: a device's history shows every
 * version with its reason, person and time, and "Correct" adds a new version with a reason (the
 * earlier value stays). Time zero after Start, a finished run's readings and withdrawing a failure
 * are an engineer's deviation (shared/domain/records.ts); the server says so when refused.
 */
import { router } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { useCan } from '@/components/queries/auth';
import { useDeviceHistory, useReadPointReadings } from '@/components/queries/measurements';
import { colors, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { QueryState } from '@/components/ui/QueryState';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { RECORD_DEVIATION_LABEL, type RecordDeviationKind } from '@/shared/domain/records';
import type { ReadingVersion, StoredReading } from '@/shared/schemas/measurements';
import { CorrectReadingForm } from '@/components/forms/LazyForms';
import { readingText } from './reading-text';
import { deviceHistoryHref } from '@/components/devices/links';

const deviationText = (kinds: RecordDeviationKind[]) => kinds.map((k) => RECORD_DEVIATION_LABEL[k]).join('; ');

function VersionLine({ v }: { v: ReadingVersion }) {
  return (
    <View
      style={{ gap: 2, paddingVertical: space.xs, borderTopWidth: 1, borderColor: colors.border }}
      testID={`version-${v.readPointH}-${v.version}`}
    >
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' }}>
        <Text variant="label">{`${v.readPointH} h · version ${v.version}`}</Text>
        <StatusPill size="sm" tone={v.current ? 'ok' : 'idle'} label={v.current ? 'Current' : 'Superseded'} />
        {v.deviation.length ? <StatusPill size="sm" tone="attention" label="Deviation" /> : null}
      </View>
      <Text variant="caption">{readingText(v)}</Text>
      <Text variant="caption" tone="muted">
        {`${v.version === 1 ? 'Entered' : 'Corrected'} by ${v.enteredByName ?? 'unknown'} · ${formatDateTime(v.recordedAt)}${v.fileName ? ` · file ${v.fileName}` : ' · by hand'}`}
      </Text>
      {v.reason ? <Text variant="caption">{`Reason: ${v.reason}`}</Text> : null}
      {v.deviation.length ? <Text variant="caption" tone="attention">{`Deviation on the lot: ${deviationText(v.deviation)}`}</Text> : null}
    </View>
  );
}

function DeviceHistoryView({ runId, deviceId }: { runId: string; deviceId: string }) {
  const history = useDeviceHistory(runId, deviceId);
  return (
    <QueryState query={history} loadingLabel="Loading the history…" errorTitle="Could not load the history">
      {(h) => (
        <View testID="reading-history" style={{ paddingLeft: space.sm, borderLeftWidth: 3, borderColor: colors.border }}>
          <Text variant="caption" tone="muted">{`Every version of ${h.serial}'s readings in run ${h.runCode}; none is ever deleted.`}</Text>
          {h.versions.map((v) => (
            <VersionLine key={`${v.measurementId}-${v.version}`} v={v} />
          ))}
        </View>
      )}
    </QueryState>
  );
}

function ReadingRow({ runId, r }: { runId: string; r: StoredReading }) {
  const may = useCan();
  const [open, setOpen] = useState<'history' | 'correct' | null>(null);
  const [done, setDone] = useState<string | null>(null);
  return (
    <View style={{ gap: space.xs, paddingVertical: space.sm, borderTopWidth: 1, borderColor: colors.border }} testID={`stored-${r.serial}`}>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' }}>
        <Text variant="label">{r.serial}</Text>
        {r.version > 1 ? <StatusPill size="sm" tone="info" label={`Version ${r.version} · corrected`} /> : null}
        {r.deviation.length ? <StatusPill size="sm" tone="attention" label="Deviation" /> : null}
      </View>
      <Text variant="caption">{readingText(r)}</Text>
      {r.changeReason ? <Text variant="caption" tone="muted">{`Latest reason: ${r.changeReason}`}</Text> : null}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
        <Button
          size="sm"
          variant="quiet"
          label={open === 'history' ? `Hide history of ${r.serial}` : `History of ${r.serial}`}
          onPress={() => setOpen(open === 'history' ? null : 'history')}
          testID={`history-${r.serial}`}
        />
        <Button
          size="sm"
          variant="quiet"
          label={`Device page of ${r.serial}`}
          accessibilityHint="Every socket, run, reading, trip and disposition of this device"
          onPress={() => router.push(deviceHistoryHref(r.deviceId))}
          testID={`device-page-${r.serial}`}
        />
        {may('measurement.correct') ? (
          <Button
            size="sm"
            variant="secondary"
            label={open === 'correct' ? 'Cancel' : `Correct ${r.serial}`}
            onPress={() => {
              setDone(null);
              setOpen(open === 'correct' ? null : 'correct');
            }}
            testID={`correct-${r.serial}`}
          />
        ) : null}
      </View>
      {done ? (
        <Banner tone="ok" title="Corrected">
          {done}
        </Banner>
      ) : null}
      {open === 'history' ? <DeviceHistoryView runId={runId} deviceId={r.deviceId} /> : null}
      {open === 'correct' ? (
        <CorrectReadingForm
          reading={r}
          onDone={(x) => {
            setDone(`${x.serial} is now version ${x.version}; the earlier value stays in its history.`);
            setOpen('history');
          }}
        />
      ) : null}
    </View>
  );
}

export function StoredReadingsPanel({ runId, hours, timeZeroLocked }: { runId: string; hours: number; timeZeroLocked: boolean }) {
  const readings = useReadPointReadings(runId, hours);
  return (
    <Card
      title={`Stored readings at ${hours} h`}
      description="A correction is a new version with its reason; the earlier value stays in the device's history and in the lot exports."
      testID="stored-readings"
    >
      {hours === 0 && timeZeroLocked ? (
        <Banner tone="warn" title="Time zero is locked">
          Stress has started on this run: a time-zero entry or correction now needs an engineer and a reason, and shows as a deviation on
          the lot.
        </Banner>
      ) : null}
      <QueryState
        query={readings}
        loadingLabel="Loading readings…"
        errorTitle="Could not load the readings"
        isEmpty={(l) => l.length === 0}
        empty={<Text tone="muted">No reading stored at this read point yet.</Text>}
      >
        {(list) => (
          <View>
            {list.map((r) => (
              <ReadingRow key={r.id} runId={runId} r={r} />
            ))}
          </View>
        )}
      </QueryState>
    </Card>
  );
}
