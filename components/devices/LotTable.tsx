import { router } from 'expo-router';
import type { Lot } from '@/shared/schemas/devices';
import { formatDateTime } from '@/components/common/format';
import { useLots } from '@/components/queries/lots';
import { Button } from '@/components/ui/Button';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { lotHref } from './links';

/** Lots, newest first, optionally for one device type or matching a code. */
export function LotTable({ q, deviceTypeId }: { q?: string; deviceTypeId?: string }) {
  const lots = useLots({ q: q || undefined, deviceTypeId });
  const columns: Column<Lot>[] = [
    { key: 'code', title: 'Lot', flex: 1.1, card: 'title', render: (l) => l.code },
    { key: 'part', title: 'Part', flex: 1.1, card: deviceTypeId ? 'hidden' : 'subtitle', render: (l) => l.partNumber },
    { key: 'date', title: 'Date code', flex: 0.8, render: (l) => l.dateCode || '—' },
    { key: 'qty', title: 'Lot size', flex: 0.8, align: 'right', render: (l) => l.quantity.toLocaleString('en-GB') },
    { key: 'dev', title: 'Serials', flex: 0.8, align: 'right', render: (l) => l.deviceCount.toLocaleString('en-GB') },
    { key: 'created', title: 'Registered', flex: 1.3, render: (l) => formatDateTime(l.createdAt) },
    {
      key: 'open',
      title: 'Open',
      flex: 0.8,
      card: 'actions',
      render: (l) => <Button size="sm" label="Open" accessibilityLabel={`Open lot ${l.code}`} onPress={() => router.push(lotHref(l.id))} />,
    },
  ];
  const shown = deviceTypeId ? columns.filter((c) => c.key !== 'part') : columns;
  return (
    <QueryState
      query={lots}
      loadingLabel="Loading lots…"
      errorTitle="Could not load lots"
      isEmpty={(l) => l.length === 0}
      empty={
        <EmptyState
          title={q ? `No lot code contains “${q}”` : 'No lots yet'}
          message={q ? 'Check the code on the traveller.' : 'Register a lot from its device type.'}
        />
      }
    >
      {(list) => <DataTable caption="Lots" columns={shown} rows={list} rowKey={(l) => l.id} testID="lots-table" />}
    </QueryState>
  );
}
