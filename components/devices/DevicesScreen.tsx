import { router } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import type { DeviceTypeSummary } from '@/shared/schemas/devices';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useCan } from '@/components/queries/auth';
import { useDeviceTypes } from '@/components/queries/device-types';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { Badge } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { DeviceTypeForm } from '@/components/forms/LazyForms';
import { volts } from './format';
import { deviceHref } from './links';
import { LotTable } from './LotTable';

/** Device types (part numbers with their ratings) and a lot finder. Engineers add and edit; managers read. */
export function DevicesScreen() {
  const canWrite = useCan()('deviceType.edit');
  const types = useDeviceTypes();
  const [adding, setAdding] = useState(false);
  const [notice, setNotice] = useState<string | null>(null);
  const [q, setQ] = useState('');

  const columns: Column<DeviceTypeSummary>[] = [
    { key: 'part', title: 'Part number', flex: 1.3, card: 'title', render: (d) => d.partNumber },
    {
      key: 'desc',
      title: 'Description',
      flex: 2.2,
      card: 'subtitle',
      render: (d) => (
        <Text variant="caption" tone="muted" numberOfLines={2}>
          {d.description || '—'}
        </Text>
      ),
    },
    {
      key: 'pol',
      title: 'Type',
      flex: 0.9,
      render: (d) => <Badge label={`${d.kind === 'bjt' ? 'BJT' : d.kind === 'mosfet' ? 'MOSFET' : 'Diode'} · ${d.polarity}`} />,
    },
    { key: 'bv', title: 'BVCBO / BVCEO', flex: 1.2, render: (d) => `${volts(d.bvcboV)} / ${d.bvceoV === null ? 'est.' : volts(d.bvceoV)}` },
    { key: 'tj', title: 'Tj max', flex: 0.8, render: (d) => `${d.tjMaxC} °C` },
    { key: 'lots', title: 'Lots · devices', flex: 1, render: (d) => `${d.lotCount} · ${d.deviceCount}` },
    { key: 'plans', title: 'Plans', flex: 0.6, render: (d) => String(d.planCount) },
    {
      key: 'open',
      title: 'Open',
      flex: 0.9,
      card: 'actions',
      render: (d) => (
        <Button size="sm" label="Open" accessibilityLabel={`Open ${d.partNumber}`} onPress={() => router.push(deviceHref(d.id))} />
      ),
    },
  ];

  return (
    <Screen width="wide" testID="devices-screen">
      <Header
        eyebrow="Harrowgate reliability lab"
        title="Devices & lots"
        subtitle="Part numbers with their data-sheet ratings, and the lots and serials under test."
        actions={
          canWrite && !adding ? (
            <Button
              label="New device type"
              variant="primary"
              onPress={() => {
                setNotice(null);
                setAdding(true);
              }}
              testID="new-device-type"
            />
          ) : null
        }
      />
      {notice ? (
        <Banner tone="ok" action={<Button size="sm" variant="quiet" label="Dismiss" onPress={() => setNotice(null)} />}>
          {notice}
        </Banner>
      ) : null}
      {adding ? (
        <DeviceTypeForm
          onCancel={() => setAdding(false)}
          onDone={(d) => {
            setAdding(false);
            setNotice(`${d.partNumber} was added. Open it to register lots.`);
          }}
        />
      ) : null}
      <QueryState
        query={types}
        loadingLabel="Loading device types…"
        errorTitle="Could not load device types"
        isEmpty={(l) => l.length === 0}
        empty={
          <EmptyState
            title="No device types yet"
            message={canWrite ? 'Add the first part number with its data-sheet ratings.' : 'An engineer adds part numbers here.'}
          />
        }
      >
        {(list) => (
          <DataTable
            caption="Device types"
            columns={columns}
            rows={list}
            rowKey={(d) => d.id}
            minTableWidth={780}
            testID="device-types-table"
          />
        )}
      </QueryState>

      <View style={{ gap: space.sm }}>
        <Text variant="heading" heading={2}>
          Find a lot
        </Text>
        <Field
          label="Lot code"
          value={q}
          onChangeText={setQ}
          placeholder="e.g. HG2611"
          autoCapitalize="characters"
          help="Type part of a lot code; lots of every device type are searched."
          testID="lot-search"
        />
        <LotTable q={q.trim()} />
      </View>
    </Screen>
  );
}
