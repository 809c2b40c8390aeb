import { router, type Href } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { PLAN_KINDS, PLAN_KIND_LABEL } from '@/shared/domain/stress';
import type { PlanKind, PlanSummary } from '@/shared/schemas/plans';
import { amps, celsius, volts } from '@/components/devices/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useCan } from '@/components/queries/auth';
import { useDeviceTypes } from '@/components/queries/device-types';
import { usePlans } from '@/components/queries/plans';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Badge } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { CheckStatusPill } from './CheckStatusPill';
import { KIND_SHORT, planHref } from './links';

/** "VCB 112 V" / "VCE 20 V · IC 96 mA" / "VCE 30 V · IB 0.6 mA (forced)". */
export function biasSummary(p: Pick<PlanSummary, 'kind' | 'bias'>): string {
  const b = p.bias;
  const parts: string[] = [];
  if (b.vcbV !== null) parts.push(`VCB ${volts(b.vcbV)}`);
  if (b.vebV !== null && b.vebV > 0) parts.push(`VEB ${volts(b.vebV)}`);
  if (b.vceV !== null) parts.push(`VCE ${volts(b.vceV)}`);
  if (b.icA !== null) parts.push(`IC ${amps(b.icA)}`);
  if (b.ibA !== null) parts.push(`IB ${amps(b.ibA)} (forced)`);
  return parts.join(' · ') || '—';
}

/** The engineer's plan list: current version of every plan, with the check's verdict. */
export function PlansScreen() {
  const canWrite = useCan()('plan.edit');
  const [kind, setKind] = useState<PlanKind | 'all'>('all');
  const [deviceTypeId, setDeviceTypeId] = useState<string>('all');
  const types = useDeviceTypes();
  const plans = usePlans({ kind: kind === 'all' ? undefined : kind, deviceTypeId: deviceTypeId === 'all' ? undefined : deviceTypeId });

  const columns: Column<PlanSummary>[] = [
    { key: 'name', title: 'Plan', flex: 2, card: 'title', render: (p) => p.name },
    { key: 'kind', title: 'Stress', flex: 1.4, render: (p) => <Badge label={KIND_SHORT[p.kind]} /> },
    { key: 'device', title: 'Device', flex: 1, card: 'subtitle', render: (p) => p.device.partNumber },
    {
      key: 'chamber',
      title: 'Chamber',
      flex: 1,
      render: (p) => `${celsius(p.chamberC)}${p.humidityPct !== null ? ` / ${p.humidityPct} % RH` : ''}`,
    },
    { key: 'bias', title: 'Bias', flex: 1.6, render: (p) => biasSummary(p) },
    {
      key: 'hours',
      title: 'Hours · sample',
      flex: 1.1,
      render: (p) => `${p.durationH.toLocaleString('en-GB')} h · ${p.sampleSize}/${p.acceptNumber}`,
    },
    { key: 'version', title: 'Ver.', flex: 0.4, render: (p) => `v${p.version}` },
    { key: 'check', title: 'Check', flex: 1.9, render: (p) => <CheckStatusPill status={p.checkStatus} size="sm" /> },
    {
      key: 'open',
      title: 'Open',
      flex: 0.7,
      card: 'actions',
      render: (p) => (
        <Button size="sm" label="Open" accessibilityLabel={`Open plan ${p.name}`} onPress={() => router.push(planHref(p.id))} />
      ),
    },
  ];

  return (
    <Screen width="wide" testID="plans-screen">
      <Header
        eyebrow="Stress plans"
        title="Plans"
        subtitle="What each lot will be stressed with, checked against the device ratings before anything is powered."
        actions={
          canWrite ? (
            <Button label="New plan" variant="primary" onPress={() => router.push('/plans/new' as Href)} testID="new-plan" />
          ) : null
        }
      />
      <View style={{ gap: space.sm }}>
        <SegmentedChoice
          label="Stress"
          options={[{ value: 'all' as const, label: 'All' }, ...PLAN_KINDS.map((k) => ({ value: k, label: KIND_SHORT[k] }))]}
          value={kind}
          onChange={setKind}
        />
        {types.data && types.data.length > 0 ? (
          <SegmentedChoice
            label="Device"
            options={[{ value: 'all', label: 'All' }, ...types.data.map((d) => ({ value: d.id, label: d.partNumber }))]}
            value={deviceTypeId}
            onChange={setDeviceTypeId}
          />
        ) : null}
      </View>
      <QueryState
        query={plans}
        loadingLabel="Loading plans…"
        errorTitle="Could not load plans"
        isEmpty={(l) => l.length === 0}
        empty={
          <EmptyState
            title={kind === 'all' && deviceTypeId === 'all' ? 'No plans yet' : 'No plans match'}
            message={
              kind !== 'all'
                ? `No current ${PLAN_KIND_LABEL[kind as PlanKind].toLowerCase()} plans${deviceTypeId !== 'all' ? ' for this device' : ''}.`
                : 'Start one from a template: HTRB, powered life, intermittent life or THB.'
            }
            action={canWrite ? <Button label="New plan" onPress={() => router.push('/plans/new' as Href)} /> : undefined}
          />
        }
      >
        {(list) => (
          <>
            <DataTable
              caption="Stress plans, current versions"
              columns={columns}
              rows={list}
              rowKey={(p) => p.id}
              cardsBelow="desktop"
              minTableWidth={920}
              testID="plans-table"
            />
            <Text variant="caption" tone="subtle">
              Only the newest version of each plan is listed; open a plan to see its earlier versions. “Refused by check” plans are drafts:
              a run cannot be booked with them without a written reason.
            </Text>
          </>
        )}
      </QueryState>
    </Screen>
  );
}
