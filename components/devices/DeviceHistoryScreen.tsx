import { router, useLocalSearchParams, type Href } from 'expo-router';
import { View } from 'react-native';
import { withSiPrefix } from '@/shared/domain/format';
import type { DeviceHistoryView, DeviceSocketStint } from '@/shared/schemas/device-history';
import type { DeviceReadPointDrift, ReadingVersion } from '@/shared/schemas/measurements';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useDeviceFullHistory } from '@/components/queries/device-history';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { sig } from './format';
import { lotHref } from './links';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

const STATUS = {
  pass: { tone: 'ok', label: 'Within criteria' },
  fail: { tone: 'danger', label: 'Failed' },
  'no-time-zero': { tone: 'idle', label: 'No time zero' },
  'not-measured': { tone: 'idle', label: 'Not measured' },
  'not-judged': { tone: 'idle', label: 'Not judged' },
} as const;

const param = (r: DeviceReadPointDrift, name: 'hfe' | 'icbo' | 'vcesat') => r.parameters?.find((p) => p.parameter === name) ?? null;
const amps = (a: number | null) => (a === null ? '—' : withSiPrefix(a, 'A'));

const readingColumns: Column<DeviceReadPointDrift>[] = [
  { key: 'h', title: 'Read point', render: (r) => `${sig(r.readPointH, 5)} h`, card: 'title' },
  {
    key: 'hfe',
    title: 'hFE (change)',
    render: (r) => (r.hfe === null ? '—' : `${sig(r.hfe, 4)}${r.readPointH > 0 ? ` (${sig(param(r, 'hfe')?.changePct ?? null)} %)` : ''}`),
    align: 'right',
  },
  {
    key: 'icbo',
    title: 'ICBO (× time zero)',
    render: (r) => `${amps(r.icboA)}${r.readPointH > 0 && param(r, 'icbo')?.ratio != null ? ` (${sig(param(r, 'icbo')!.ratio)}×)` : ''}`,
    align: 'right',
  },
  {
    key: 'vce',
    title: 'VCE(sat) (shift)',
    render: (r) =>
      r.vcesatV === null
        ? '—'
        : `${sig(r.vcesatV)} V${r.readPointH > 0 && param(r, 'vcesat')?.delta != null ? ` (${sig(param(r, 'vcesat')!.delta! * 1000)} mV)` : ''}`,
    align: 'right',
  },
  {
    key: 'pass',
    title: 'Judged',
    render: (r) =>
      r.readPointH === 0 ? 'time zero' : r.pass === null ? 'not judged' : r.pass ? 'within criteria' : `failed: ${r.failed.join(', ')}`,
  },
];

const versionText = (v: ReadingVersion) =>
  `${sig(v.readPointH, 5)} h, version ${v.version}${v.current ? ' (current)' : ''}: ` +
  (v.result === 'measured' ? `hFE ${sig(v.hfe, 4)}, ICBO ${amps(v.icboA)}, VCE(sat) ${sig(v.vcesatV)} V` : v.result) +
  ` — ${v.enteredByName ?? 'unknown'}, ${formatDateTime(v.recordedAt)}${v.reason ? `; reason: ${v.reason}` : ''}`;

function StintCard({ s }: { s: DeviceSocketStint }) {
  const st = STATUS[s.status];
  return (
    <Card
      title={`Run ${s.runCode} · ${s.rigCode ?? 'no rig'} socket ${s.socketIndex}`}
      description={`${s.planName} · ${s.runState} · from ${formatDateTime(s.from, 'not started')} to ${s.to ? formatDateTime(s.to) : s.from ? 'now' : '—'} · ${sig(s.creditedHours, 5)} stress hours credited`}
      testID={`stint-${s.runCode}`}
    >
      <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap', alignItems: 'center' }}>
        <StatusPill tone={st.tone} label={st.label} testID={`stint-status-${s.runCode}`} />
        {s.firstFailedH !== null ? <Text variant="caption">First failed at {sig(s.firstFailedH, 5)} h</Text> : null}
        <Button size="sm" variant="quiet" label="Open the run" onPress={() => router.push(`/runs/${s.runId}` as Href)} />
      </View>
      {s.tripped ? (
        <Banner tone="danger" title="Protection trip" testID={`stint-trip-${s.runCode}`}>
          {`Socket ${s.socketIndex} tripped${s.trippedAt ? ` at ${formatDateTime(s.trippedAt)}` : ''}: ${s.tripReason ?? 'no reason recorded'}. Stress hours stop at the trip.`}
        </Banner>
      ) : null}
      {s.readPoints.length ? (
        <DataTable
          caption={`Readings of this device on run ${s.runCode}`}
          columns={readingColumns}
          rows={s.readPoints}
          rowKey={(r) => String(r.readPointH)}
          minTableWidth={640}
          testID={`stint-readings-${s.runCode}`}
        />
      ) : (
        <Text variant="caption" tone="muted">
          No readings on this run yet.
        </Text>
      )}
      {s.versions.some((v) => v.version > 1) ? (
        <View style={{ gap: space.xxs }}>
          <Text variant="bodyStrong">Every version of the corrected readings</Text>
          {s.versions
            .filter((v) => s.versions.some((w) => w.readPointH === v.readPointH && w.version > 1))
            .map((v) => (
              <Text key={`${v.measurementId}-${v.version}`} variant="caption">
                {versionText(v)}
              </Text>
            ))}
        </View>
      ) : (
        <Text variant="caption" tone="muted">
          {s.versions.length} reading{s.versions.length === 1 ? '' : 's'} recorded, none corrected.
        </Text>
      )}
    </Card>
  );
}

function History({ h }: { h: DeviceHistoryView }) {
  return (
    <>
      <Header
        eyebrow={`Device of lot ${h.lot.code} · ${h.lot.partNumber}`}
        title={h.serial}
        subtitle={`${h.sockets.length} run${h.sockets.length === 1 ? '' : 's'} · ${h.dispositions.length} disposition${h.dispositions.length === 1 ? '' : 's'} · ${h.alarms.length} alarm${h.alarms.length === 1 ? '' : 's'}`}
        actions={<Button label={`Lot ${h.lot.code}`} variant="quiet" onPress={() => router.push(lotHref(h.lot.id))} />}
      />
      <Card title="Lot and traceability" testID="device-traceability">
        <Text variant="body">{`Lot ${h.lot.code} of ${h.lot.partNumber}${h.lot.dateCode ? `, date code ${h.lot.dateCode}` : ''}`}</Text>
        <Text variant="body" testID="device-trace-line">
          {`Wafer lot ${h.lot.waferLot || 'not recorded'} · assembly lot ${h.lot.assemblyLot || 'not recorded'} · die revision ${h.lot.dieRevision || 'not recorded'}`}
        </Text>
      </Card>
      {h.sockets.length === 0 ? (
        <EmptyState title="Not on a run yet" message="This device has not been loaded into a socket." />
      ) : (
        h.sockets.map((s) => <StintCard key={s.runId} s={s} />)
      )}
      <Card
        title="Dispositions"
        description="What happened to the device where a reading is missing or after a trip, with the reason recorded."
        testID="device-dispositions"
      >
        {h.dispositions.length === 0 ? (
          <Text variant="caption" tone="muted">
            None recorded.
          </Text>
        ) : (
          h.dispositions.map((d) => (
            <Text key={`${d.runCode}-${d.at}`} variant="body">
              {`${d.runCode}: ${d.label} from ${sig(d.readPointH, 5)} h — ${d.reason} (${d.byName}, ${formatDateTime(d.at)})`}
            </Text>
          ))
        )}
      </Card>
      <Card title="Alarms on its socket" testID="device-alarms">
        {h.alarms.length === 0 ? (
          <Text variant="caption" tone="muted">
            None.
          </Text>
        ) : (
          h.alarms.map((a) => (
            <Text key={`${a.runCode}-${a.raisedAt}-${a.kind}`} variant="body">
              {`${formatDateTime(a.raisedAt)} · ${a.runCode} · ${a.severity}: ${a.title} — ${a.message}${a.clearedAt ? ` (cleared ${formatDateTime(a.clearedAt)})` : ''}`}
            </Text>
          ))
        )}
      </Card>
    </>
  );
}

/** One device's whole record on one page: lot, sockets, runs, readings and drift, trips, alarms, dispositions, versions. */
export function DeviceHistoryScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const valid = typeof id === 'string' && UUID.test(id);
  const q = useDeviceFullHistory(valid ? id : undefined);
  if (!valid) {
    return (
      <Screen>
        <EmptyState
          title="No such device"
          message="The address does not name a device."
          action={<Button label="Devices & lots" onPress={() => router.replace('/devices' as Href)} />}
        />
      </Screen>
    );
  }
  return (
    <Screen width="wide" testID="device-history-screen">
      <QueryState query={q} loadingLabel="Loading the device's history…" errorTitle="Could not load this device">
        {(h) => <History h={h} />}
      </QueryState>
    </Screen>
  );
}
