import { useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { LOT_VERDICT_LABEL } from '@/shared/domain/verdicts';
import type { LotDetail, LotDevice, LotReadPointStats } from '@/shared/schemas/analytics';
import { describeParameters } from '@/shared/reliability/mechanism-names';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useLotAnalysis } from '@/components/queries/analytics';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { LotDownloads } from './LotDownloads';
import { hours, PARAM_LABEL, pct, sig } from './format';
import { LotDistributionChart } from '@/components/charts/LazyCharts';
import { LotPlanJudgement } from './LotPlanJudgement';
import { LotForecastCard } from './LotForecastCard';
import { LotRecordsCard } from './LotRecordsCard';
import { VerdictPill } from './verdict';
import { VerdictSignatures } from '@/components/signoff/VerdictSignatures';
import { countOf } from '@/shared/domain/format';

const DEVICE_STATUS = {
  pass: { tone: 'ok', label: 'Within criteria' },
  fail: { tone: 'danger', label: 'Failed' },
  'no-time-zero': { tone: 'idle', label: 'No time zero' },
  'not-measured': { tone: 'idle', label: 'Not measured' },
} as const;

function FitCard({ lot }: { lot: LotDetail }) {
  const f = lot.fit;
  const unavailable = lot.plans.find((p) => p.planId === lot.plan?.id)?.fitUnavailable ?? null;
  return (
    <Card
      title={f ? `Failure rate · ${f.mechanismLabel}` : 'Failure rate'}
      description="Upper bound at 60 % and 90 % confidence, chi-square method, for the one failure mechanism this stress accelerates (never pooled with others). Each device is credited by its own hours at the junction temperature estimated from its socket's telemetry."
    >
      {f ? (
        <View style={{ gap: space.xs }}>
          <View style={{ flexDirection: 'row', gap: space.lg, flexWrap: 'wrap' }}>
            <View>
              <Text variant="caption" tone="muted">
                Mechanism
              </Text>
              <Text variant="title" testID="fit-mechanism">
                {f.mechanismLabel}
              </Text>
            </View>
            <View>
              <Text variant="caption" tone="muted">
                FIT at 60 %
              </Text>
              <Text variant="title" testID="fit60">
                {sig(f.fit60)}
              </Text>
            </View>
            <View>
              <Text variant="caption" tone="muted">
                FIT at 90 %
              </Text>
              <Text variant="title" testID="fit90">
                {sig(f.fit90)}
              </Text>
            </View>
            <View>
              <Text variant="caption" tone="muted">
                Mean acceleration
              </Text>
              <Text variant="title">{sig(f.accelerationFactor)}</Text>
            </View>
          </View>
          <Text variant="caption">
            {countOf(f.failures, 'failure')} in {Math.round(f.deviceHours).toLocaleString('en-GB')} device-hours credited to {f.devices}{' '}
            devices (mean {hours(f.hoursEach)} each), {Math.round(f.equivalentDeviceHours).toLocaleString('en-GB')} at use conditions.
          </Text>
          <Text variant="caption" testID="fit-junction">
            {f.junction.tjMeanC === null
              ? 'No junction history.'
              : `Junction over the credited hours: mean ${sig(f.junction.tjMeanC, 4)} °C${
                  sig(f.junction.tjMinC!, 4) === sig(f.junction.tjMaxC!, 4)
                    ? ''
                    : `, ${sig(f.junction.tjMinC!, 4)}–${sig(f.junction.tjMaxC!, 4)} °C`
                }; ${f.constants.stressBasis}.`}
          </Text>
          {f.accelerationFactor < 1 ? (
            <Text variant="caption" testID="fit-decelerated">
              The junction ran below the use temperature ({f.constants.useC} °C): these hours count for less than field hours, so the bound
              is wide. A plan meant to accelerate needs the junction above the use temperature.
            </Text>
          ) : null}
          <Text variant="caption" tone="muted" testID="fit-model">
            {f.model}; {describeParameters(f.parameters)}. k = {f.constants.boltzmannEvPerK} eV/K ({f.constants.source}), T(K) = T(°C) +{' '}
            {f.constants.kelvinOffset}.
          </Text>
        </View>
      ) : (
        <Text tone="muted">{unavailable ?? 'No read point after time zero yet.'}</Text>
      )}
    </Card>
  );
}

const rpColumns: Column<LotReadPointStats>[] = [
  { key: 'h', title: 'Read point', flex: 0.8, card: 'title', render: (r) => hours(r.hours) },
  { key: 'n', title: 'Devices', flex: 0.7, align: 'right', render: (r) => `${r.devicesMeasured}${r.late ? ` (${r.late} late)` : ''}` },
  {
    key: 'hfe',
    title: 'hFE change mean ± sd',
    flex: 1.3,
    align: 'right',
    render: (r) => (r.hfeChangePct ? `${pct(r.hfeChangePct.mean)} ± ${sig(r.hfeChangePct.sd)}` : '—'),
  },
  {
    key: 'hfeR',
    title: 'hFE 5–95 %',
    flex: 1.2,
    align: 'right',
    render: (r) => (r.hfeChangePct ? `${sig(r.hfeChangePct.p5)} to ${sig(r.hfeChangePct.p95)}` : '—'),
  },
  {
    key: 'icbo',
    title: 'ICBO ratio median (95 %)',
    flex: 1.3,
    align: 'right',
    render: (r) => (r.icboRatio ? `${sig(r.icboRatio.median)}× (${sig(r.icboRatio.p95)}×)` : '—'),
  },
  {
    key: 'vce',
    title: 'VCE(sat) shift mean',
    flex: 1,
    align: 'right',
    render: (r) => (r.vcesatShiftMv ? `${sig(r.vcesatShiftMv.mean)} mV` : '—'),
  },
  { key: 'f', title: 'Failed so far', flex: 0.8, align: 'right', render: (r) => String(r.cumulativeFails) },
];

const deviceColumns: Column<LotDevice>[] = [
  { key: 'serial', title: 'Serial', flex: 0.9, card: 'title', render: (d) => d.serial },
  { key: 'socket', title: 'Socket', flex: 0.6, align: 'right', render: (d) => String(d.socketIndex) },
  {
    key: 'status',
    title: 'Status',
    flex: 1.2,
    render: (d) => <StatusPill size="sm" tone={DEVICE_STATUS[d.status].tone} label={DEVICE_STATUS[d.status].label} />,
  },
  {
    key: 'first',
    title: 'First failed',
    flex: 0.9,
    align: 'right',
    render: (d) =>
      d.firstFailedH === null ? '—' : `${hours(d.firstFailedH)} (${d.failedParameters.map((p) => PARAM_LABEL[p]).join(', ')})`,
  },
  { key: 'hfe', title: 'hFE change', flex: 0.9, align: 'right', render: (d) => pct(d.hfeChangePct) },
  { key: 'icbo', title: 'ICBO ratio', flex: 0.8, align: 'right', render: (d) => (d.icboRatio === null ? '—' : `${sig(d.icboRatio)}×`) },
  {
    key: 'vce',
    title: 'VCE(sat) shift',
    flex: 0.9,
    align: 'right',
    render: (d) => (d.vcesatShiftMv === null ? '—' : `${sig(d.vcesatShiftMv)} mV`),
  },
  {
    key: 'notes',
    title: 'Notes',
    flex: 1.2,
    render: (d) => (
      <Text variant="caption" tone="muted">
        {[d.hfeNormalised ? 'hFE referred to reference temperature' : null, d.late ? 'late reading' : null].filter(Boolean).join('; ') ||
          '—'}
      </Text>
    ),
  },
];

/** One lot: verdict and reasons, spread per read point, trend, each plan's judgement (sample, read points, degradation, peers), FIT, devices, exports. */
export function LotDetailScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const router = useRouter();
  const lot = useLotAnalysis(id);
  const [deviceFilter, setDeviceFilter] = useState<'all' | 'fail'>('all');

  return (
    <Screen width="wide" testID="lot-detail-screen">
      <QueryState query={lot} loadingLabel="Analysing the lot…" errorTitle="Could not load this lot">
        {(l) => (
          <View style={{ gap: space.lg }}>
            <Header
              eyebrow={`Lot · ${l.partNumber}`}
              title={l.lotCode}
              subtitle={l.plan ? `${l.plan.name}${l.run ? ` · run ${l.run.code}, ${l.run.state}` : ''}` : 'Not on a stress run yet'}
            />
            <LotDownloads lotId={l.lotId} lotCode={l.lotCode} />
            <Button
              size="sm"
              variant="quiet"
              label="‹ All lots"
              onPress={() => (router.canGoBack() ? router.back() : router.replace('/trends' as Href))}
            />
            <Card title="Verdict">
              <View style={{ gap: space.sm }}>
                <VerdictPill verdict={l.verdict} size="md" />
                {l.planVerdicts.length > 1 ? (
                  <Text variant="caption" testID="plan-verdicts">
                    Combined over {l.planVerdicts.length} plans (the worst counts):{' '}
                    {l.planVerdicts.map((p) => `${p.planName}: ${LOT_VERDICT_LABEL[p.verdict]}`).join('; ')}.
                  </Text>
                ) : null}
                {l.reasons.map((r, i) => (
                  <Text key={i} variant={i === 0 ? 'bodyStrong' : 'body'}>
                    • {r}
                  </Text>
                ))}
                {l.gainReference.normalisedReadings > 0 ? (
                  <Banner tone="info" title="Some hFE readings were referred to the reference temperature">
                    {`${l.gainReference.normalisedReadings} hFE reading${l.gainReference.normalisedReadings === 1 ? ' was' : 's were'} measured away from ${l.gainReference.referenceC} °C and referred to it with β(T) = β_ref·(T/T_ref)^XTB, XTB ${l.gainReference.xtb} (kelvin), before the change from time zero was taken.`}
                  </Banner>
                ) : null}
              </View>
            </Card>
            <VerdictSignatures lotId={l.lotId} />
            {l.verdict !== 'untested' ? <LotForecastCard lotId={l.lotId} /> : null}
            {l.verdict === 'untested' ? (
              <EmptyState title="No readings" message="This lot has not been on a stress run yet." />
            ) : (
              <>
                <Card title="Spread per read point" description="Change from time zero across the lot's devices.">
                  <LotDistributionChart lot={l} />
                </Card>
                <DataTable
                  caption="Drift distribution per read point"
                  columns={rpColumns}
                  rows={l.readPoints}
                  rowKey={(r) => String(r.hours)}
                  testID="lot-readpoints"
                />
                <Card
                  title="Typical device"
                  description="The lot's typical device (mean hFE change, median ICBO ratio, mean VCE(sat) shift) fitted through the origin and solved for the limit; the verdict reads each device's own path (below)."
                >
                  <View style={{ gap: space.xxs }}>
                    {l.trends.map((t) => (
                      <Text key={t.parameter}>
                        {PARAM_LABEL[t.parameter]}:{' '}
                        {t.pseudoFailureH === null
                          ? 'not projected to reach its limit'
                          : `reaches ${t.model === 'log-ratio-origin' ? `${sig(t.limit)}×` : t.parameter === 'vcesat' ? `${sig(t.limit)} mV` : `${sig(t.limit)} %`} at ${hours(t.pseudoFailureH)}`}
                        {l.plan ? ` (target life ${hours(l.plan.durationH)})` : ''}
                      </Text>
                    ))}
                    {l.trends.length === 0 ? <Text tone="muted">Needs a read point after time zero.</Text> : null}
                  </View>
                </Card>
                {l.plans.map((p) => (
                  <LotPlanJudgement key={p.planId} plan={p} />
                ))}
                {l.productionDateSource === 'date-code' ? (
                  <Text variant="caption" tone="muted">
                    Peer lots are ordered by production date; this lot's ({l.productionDate}) is read from its date code {l.dateCode} (year
                    and week).
                  </Text>
                ) : null}
                <FitCard lot={l} />
                <View style={{ gap: space.sm }}>
                  <Text variant="heading" heading={2}>
                    Devices ({l.devices.length})
                  </Text>
                  <SegmentedChoice
                    label="Show"
                    options={[
                      { value: 'all', label: 'All devices' },
                      { value: 'fail', label: `Failed only (${l.fails})` },
                    ]}
                    value={deviceFilter}
                    onChange={(v) => setDeviceFilter(v as 'all' | 'fail')}
                  />
                  <DataTable
                    caption="Devices of the lot on the run"
                    columns={deviceColumns}
                    rows={deviceFilter === 'fail' ? l.devices.filter((d) => d.status === 'fail') : l.devices}
                    rowKey={(d) => d.deviceId}
                    testID="lot-devices"
                  />
                </View>
              </>
            )}
            <LotRecordsCard lot={l} />
            <Banner tone="warn" title="Caution">
              {l.caution}
            </Banner>
          </View>
        )}
      </QueryState>
    </Screen>
  );
}
