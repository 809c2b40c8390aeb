import { MEASURE_WITHIN_H } from '@/shared/domain/standards';
import { MEASUREMENT_RESULT_LABEL } from '@/shared/evidence';
import { useState } from 'react';
import { View } from 'react-native';
import type { RowResult } from '@/shared/schemas/measurements';
import { space } from '@/components/theme/tokens';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';

const OUTCOME = {
  insert: { tone: 'ok', label: 'New reading' },
  replace: { tone: 'info', label: 'Replaces stored' },
  unchanged: { tone: 'idle', label: 'Already stored' },
  rejected: { tone: 'danger', label: 'Refused' },
} as const;

const columns = (noun: string): Column<RowResult>[] => [
  { key: 'row', title: noun, flex: 0.5, align: 'right', card: 'title', render: (r) => `${noun} ${r.row}` },
  { key: 'serial', title: 'Serial', flex: 0.9, card: 'subtitle', render: (r) => r.serial ?? '—' },
  {
    key: 'outcome',
    title: 'Outcome',
    flex: 1,
    render: (r) => (
      <View style={{ gap: 2 }}>
        <StatusPill size="sm" tone={OUTCOME[r.outcome].tone} label={OUTCOME[r.outcome].label} />
        {r.late ? <StatusPill size="sm" tone="attention" label="Late" /> : null}
      </View>
    ),
  },
  {
    key: 'reasons',
    title: 'Why',
    flex: 3,
    render: (r) => (
      <Text variant="caption" tone={r.reasons.length ? 'danger' : 'muted'}>
        {r.late ? `Measured more than ${MEASURE_WITHIN_H} h after bias was removed (JESD22-A108 window, from memory). ` : ''}
        {r.reasons.length ? r.reasons.join(' ') : r.values ? valuesText(r.values) : '—'}
        {r.conditionsFlag ? ` Flagged: ${r.conditionsFlag} Not judged until an engineer confirms it.` : ''}
      </Text>
    ),
  },
];

function valuesText(v: NonNullable<RowResult['values']>): string {
  if (v.result !== 'measured')
    return `${MEASUREMENT_RESULT_LABEL[v.result]}: counts as a failure at this read point (measured at ${v.measuredC} °C)`;
  const nA = v.icboA === null ? '—' : `${+(v.icboA * 1e9).toPrecision(4)} nA`;
  const mV = v.vcesatV === null ? '—' : `${+(v.vcesatV * 1000).toPrecision(4)} mV`;
  return `hFE ${v.hfe}, ICBO ${nA}, VCE(sat) ${mV} at ${v.measuredC} °C`;
}

/** Every row's outcome, with the reason for each refused row; filter to problems only. */
export function RowOutcomes({ rows, noun = 'Row', testID }: { rows: RowResult[]; noun?: string; testID?: string }) {
  const bad = rows.filter((r) => r.outcome === 'rejected' || r.late).length;
  const [only, setOnly] = useState<'all' | 'problems'>(bad ? 'problems' : 'all');
  const shown = only === 'problems' ? rows.filter((r) => r.outcome === 'rejected' || r.late) : rows;
  return (
    <View style={{ gap: space.sm }}>
      <SegmentedChoice
        label="Rows"
        options={[
          { value: 'problems', label: `Problems (${bad})` },
          { value: 'all', label: `All (${rows.length})` },
        ]}
        value={only}
        onChange={(v) => setOnly(v as 'all' | 'problems')}
      />
      {shown.length ? (
        <DataTable caption="Row outcomes" columns={columns(noun)} rows={shown} rowKey={(r) => String(r.row)} testID={testID} />
      ) : (
        <Text tone="muted">No problems: every row can be stored.</Text>
      )}
    </View>
  );
}
