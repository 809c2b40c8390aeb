import { useRouter, type Href } from 'expo-router';
import { useMemo, useState } from 'react';
import { Pressable, View } from 'react-native';
import { LOT_VERDICT_LABEL, LOT_VERDICTS } from '@/shared/domain/verdicts';
import type { LotSummary, LotVerdict } from '@/shared/schemas/analytics';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useDeviceTypeSummaries, useLotSummaries } from '@/components/queries/analytics';
import { colors, radius, space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { DriftTrendChart } from '@/components/charts/LazyCharts';
import { ForecastBacktestCard } from './ForecastBacktestCard';
import { forecastLine } from './forecast-words';
import { hours, pct, sig } from './format';
import { VERDICT_ORDER, VerdictPill } from './verdict';

type SortKey = 'worst' | 'lot' | 'drift' | 'projection';
const SORTS = [
  { value: 'worst', label: 'Worst first' },
  { value: 'lot', label: 'Lot code' },
  { value: 'drift', label: 'Largest drift' },
  { value: 'projection', label: 'Earliest crossing' },
] as const;

function sortLots(list: LotSummary[], key: SortKey): LotSummary[] {
  const byCode = (a: LotSummary, b: LotSummary) => a.lotCode.localeCompare(b.lotCode);
  const nullLast = (x: number | null) => (x === null ? Number.POSITIVE_INFINITY : x);
  return [...list].sort((a, b) => {
    if (key === 'worst') return VERDICT_ORDER[a.verdict] - VERDICT_ORDER[b.verdict] || byCode(a, b);
    if (key === 'drift')
      return (
        nullLast(a.latestHfeChangePct === null ? null : -Math.abs(a.latestHfeChangePct)) -
          nullLast(b.latestHfeChangePct === null ? null : -Math.abs(b.latestHfeChangePct)) || byCode(a, b)
      );
    if (key === 'projection') return nullLast(a.pseudoFailureH) - nullLast(b.pseudoFailureH) || byCode(a, b);
    return byCode(a, b);
  });
}

/** Manager's home: how each lot drifts under stress, and which ones need a decision. */
export function TrendsScreen() {
  const router = useRouter();
  const lots = useLotSummaries();
  const types = useDeviceTypeSummaries();
  const [verdict, setVerdict] = useState<LotVerdict | 'all'>('all');
  const [typeId, setTypeId] = useState<string>('all');
  const [sort, setSort] = useState<SortKey>('worst');
  const [search, setSearch] = useState('');

  const open = (id: string) => router.push(`/trends/lots/${id}` as Href);

  const typeChoices = useMemo(() => {
    const seen = new Map<string, string>();
    for (const l of lots.data ?? []) seen.set(l.deviceTypeId, l.partNumber);
    return [
      { value: 'all', label: 'All types' },
      ...[...seen].sort((a, b) => a[1].localeCompare(b[1])).map(([value, label]) => ({ value, label })),
    ];
  }, [lots.data]);

  const columns: Column<LotSummary>[] = [
    {
      key: 'lot',
      title: 'Lot',
      flex: 1.2,
      card: 'title',
      render: (l) => (
        <Pressable accessibilityRole="link" accessibilityLabel={`Open lot ${l.lotCode}`} onPress={() => open(l.lotId)} hitSlop={8}>
          <Text variant="bodyStrong" style={{ textDecorationLine: 'underline', color: colors.focus }}>
            {l.lotCode}
          </Text>
        </Pressable>
      ),
    },
    { key: 'type', title: 'Device type', flex: 1.1, card: 'subtitle', render: (l) => l.partNumber },
    { key: 'verdict', title: 'Verdict', flex: 1.1, render: (l) => <VerdictPill verdict={l.verdict} /> },
    { key: 'at', title: 'Latest read point', flex: 0.9, align: 'right', render: (l) => hours(l.latestReadPointH) },
    { key: 'hfe', title: 'Mean hFE change', flex: 1, align: 'right', render: (l) => pct(l.latestHfeChangePct) },
    {
      key: 'icbo',
      title: 'Median ICBO ratio',
      flex: 1,
      align: 'right',
      render: (l) => (l.latestIcboRatio === null ? '—' : `${sig(l.latestIcboRatio)}×`),
    },
    {
      key: 'fails',
      title: 'Fails / accept',
      flex: 0.9,
      align: 'right',
      render: (l) => (l.plan ? `${l.fails} / ${l.plan.acceptNumber}` : '—'),
    },
    { key: 'proj', title: 'Projected crossing', flex: 1, align: 'right', render: (l) => hours(l.pseudoFailureH) },
    { key: 'forecast', title: 'Chance of passing', flex: 1.1, align: 'right', render: (l) => forecastLine(l.forecast) },
    {
      key: 'open',
      title: 'Details',
      flex: 0.9,
      card: 'actions',
      render: (l) => (
        <Button size="sm" variant="secondary" label="Open" accessibilityLabel={`Open lot ${l.lotCode}`} onPress={() => open(l.lotId)} />
      ),
    },
  ];

  return (
    <Screen width="wide" testID="trends-screen">
      <Header
        eyebrow="Quality"
        title="Lot trends"
        subtitle="How each lot's parameters drift under stress, and which lots pass, drift or fail against their plan."
      />
      <QueryState
        query={lots}
        loadingLabel="Analysing lots…"
        errorTitle="Could not load the lot analysis"
        isEmpty={(list) => list.length === 0}
        empty={
          <EmptyState
            title="No lots yet"
            message="Lots appear here once engineers register them; drift shows once a run has readings after time zero."
          />
        }
      >
        {(all) => {
          const inType = all.filter((l) => typeId === 'all' || l.deviceTypeId === typeId);
          const q = search.trim().toLowerCase();
          const rows = sortLots(
            inType.filter(
              (l) =>
                (verdict === 'all' || l.verdict === verdict) &&
                (!q || l.lotCode.toLowerCase().includes(q) || l.partNumber.toLowerCase().includes(q)),
            ),
            sort,
          );
          const counts = LOT_VERDICTS.map((v) => [v, all.filter((l) => l.verdict === v).length] as const).filter(([, n]) => n > 0);
          return (
            <View style={{ gap: space.lg }}>
              <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }} accessibilityLabel="Lots by verdict">
                {counts.map(([v, n]) => (
                  <View key={v} style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
                    <VerdictPill verdict={v} size="md" />
                    <Text variant="label">{n}</Text>
                  </View>
                ))}
              </View>
              <SegmentedChoice label="Device type" options={typeChoices} value={typeId} onChange={setTypeId} testID="trends-type" />
              <Card
                title="hFE drift by lot"
                description="Mean change from time zero at each read point; hFE referred to the part's reference temperature."
              >
                <DriftTrendChart lots={inType.filter((l) => l.verdict !== 'untested')} testID="trends-chart" />
              </Card>
              <View style={{ gap: space.sm }}>
                <Text variant="heading" heading={2}>
                  Lots
                </Text>
                <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
                  <View style={{ flexGrow: 1, flexBasis: 220 }}>
                    <Field
                      label="Find a lot"
                      placeholder="Lot code or part number"
                      value={search}
                      onChangeText={setSearch}
                      autoCapitalize="characters"
                    />
                  </View>
                </View>
                <SegmentedChoice
                  label="Show"
                  options={[
                    { value: 'all' as const, label: 'All' },
                    ...LOT_VERDICTS.map((v) => ({ value: v, label: LOT_VERDICT_LABEL[v] })),
                  ]}
                  value={verdict}
                  onChange={setVerdict}
                  testID="trends-verdict-filter"
                />
                <SegmentedChoice
                  label="Sort by"
                  options={SORTS}
                  value={sort}
                  onChange={(v) => setSort(v as SortKey)}
                  testID="trends-sort"
                />
                {rows.length === 0 ? (
                  <EmptyState title="No lot matches" message="Change the filter or the search." />
                ) : (
                  <DataTable
                    caption="Lots with their verdicts"
                    columns={columns}
                    rows={rows}
                    rowKey={(l) => l.lotId}
                    testID="trends-table"
                  />
                )}
              </View>
            </View>
          );
        }}
      </QueryState>

      <View style={{ marginTop: space.lg }}>
        <ForecastBacktestCard />
      </View>

      <View style={{ gap: space.sm, marginTop: space.lg }}>
        <Text variant="heading" heading={2}>
          Device types
        </Text>
        <QueryState
          query={types}
          loadingLabel="Adding up device-hours…"
          errorTitle="Could not load device-type summaries"
          isEmpty={(l) => l.length === 0}
          empty={<EmptyState title="No device types yet" />}
        >
          {(list) => (
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
              {list.map((t) => (
                <Pressable
                  key={t.deviceTypeId}
                  accessibilityRole="link"
                  accessibilityLabel={`Open the reliability summary of ${t.partNumber}`}
                  onPress={() => router.push(`/trends/types/${t.deviceTypeId}` as Href)}
                  style={({ pressed }) => ({ flexGrow: 1, flexBasis: 260, borderRadius: radius.md, opacity: pressed ? 0.85 : 1 })}
                >
                  <Card title={t.partNumber} description={t.description}>
                    <Text variant="caption" tone="muted">
                      {t.lotsPassed} of {t.lots} lots passed · {t.lotsDrifting} drifting · {t.lotsFailed} failed · {t.lotsInProgress} in
                      progress
                    </Text>
                    <Text variant="label">
                      {Math.round(t.deviceHours).toLocaleString('en-GB')} device-hours
                      {t.mechanisms.map((m) => ` · ${m.label} FIT (60 %) ${m.fit60 === null ? '—' : sig(m.fit60)}`).join('')}
                    </Text>
                  </Card>
                </Pressable>
              ))}
            </View>
          )}
        </QueryState>
      </View>
    </Screen>
  );
}
