import { router, useLocalSearchParams, type Href } from 'expo-router';
import { View } from 'react-native';
import { icboRuleWords } from '@/shared/domain/criteria-words';
import { bandRange, bandText } from '@/shared/domain/standards';
import { PLAN_KIND_LABEL } from '@/shared/domain/stress';
import type { PlanDetail } from '@/shared/schemas/plans';
import { formatDateTime } from '@/components/common/format';
import { amps, celsius, sig, volts } from '@/components/devices/format';
import { deviceHref } from '@/components/devices/links';
import { Columns } from '@/components/layout/Content';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useCan } from '@/components/queries/auth';
import { usePlan } from '@/components/queries/plans';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { Badge } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { CheckStatusPill } from './CheckStatusPill';
import { KIND_HELP } from './kind-help';
import { PlanCheckPanel } from './PlanCheckPanel';
import { planHref } from './links';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function Row({ label, value }: { label: string; value: string }) {
  return (
    <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.sm, paddingVertical: 2 }}>
      <Text variant="label" tone="muted">
        {label}
      </Text>
      <Text variant="bodyStrong" style={{ flexShrink: 1, textAlign: 'right' }}>
        {value}
      </Text>
    </View>
  );
}

/** One version of a plan: its conditions, the check stored with it, and the plan's version history. */
export function PlanDetailScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const valid = typeof id === 'string' && UUID.test(id);
  const plan = usePlan(valid ? id : undefined);
  const canWrite = useCan()('plan.edit');

  if (!valid) {
    return (
      <Screen>
        <EmptyState
          title="No such plan"
          message="The address does not name a plan."
          action={<Button label="All plans" onPress={() => router.replace('/plans' as Href)} />}
        />
      </Screen>
    );
  }
  return (
    <Screen width="wide" testID="plan-screen">
      <QueryState query={plan} loadingLabel="Loading the plan…" errorTitle="Could not load this plan">
        {(p) => <PlanView p={p} canWrite={canWrite} />}
      </QueryState>
    </Screen>
  );
}

function PlanView({ p, canWrite }: { p: PlanDetail; canWrite: boolean }) {
  const newest = p.versions.find((v) => v.current);
  const maxV = Math.max(p.bias.vcbV ?? 0, p.bias.vceV ?? 0);
  return (
    <>
      <Header
        eyebrow={`${PLAN_KIND_LABEL[p.kind]} · ${p.device.partNumber} · version ${p.version}`}
        title={p.name}
        actions={
          <>
            <Button label="All plans" variant="quiet" onPress={() => router.push('/plans' as Href)} />
            {canWrite && p.current ? (
              <Button
                label={`Edit (makes version ${p.version + 1})`}
                variant="primary"
                onPress={() => router.push(`/plans/new?from=${p.id}` as Href)}
                testID="edit-plan"
              />
            ) : null}
          </>
        }
      />
      {!p.current && newest ? (
        <Banner
          tone="info"
          title={`This is version ${p.version}; version ${newest.version} is the newest`}
          action={<Button size="sm" label={`Open version ${newest.version}`} onPress={() => router.push(planHref(newest.id))} />}
        >
          Earlier versions stay unchanged for the runs booked with them.
        </Banner>
      ) : null}
      <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center', flexWrap: 'wrap' }}>
        <CheckStatusPill status={p.checkStatus} />
        <Badge label={`v${p.version}${p.current ? ' (current)' : ''}`} />
        <Text variant="caption" tone="muted">
          Saved {formatDateTime(p.createdAt)}
          {p.createdBy ? ` by ${p.createdBy.name}` : ''}
        </Text>
      </View>
      <Columns>
        <Card title="Conditions" padding="md">
          <Text variant="caption" tone="muted">
            {KIND_HELP[p.kind]}
          </Text>
          <Row label="Device" value={p.device.partNumber} />
          <Row label="Chamber" value={`${celsius(p.chamberC)}${p.humidityPct !== null ? `, ${p.humidityPct} % RH` : ''}`} />
          <Row label="Band" value={`${bandText(p.chamberBand)}: hours count at ${bandRange(p.chamberC, p.chamberBand)}`} />
          {p.bias.vcbV !== null ? <Row label="VCB" value={volts(p.bias.vcbV)} /> : null}
          {p.bias.vebV !== null ? <Row label="VEB" value={volts(p.bias.vebV)} /> : null}
          {p.bias.vceV !== null ? <Row label="VCE" value={volts(p.bias.vceV)} /> : null}
          {p.bias.icA !== null ? <Row label="IC (regulated)" value={amps(p.bias.icA)} /> : null}
          {p.bias.ibA !== null ? <Row label="IB (forced)" value={amps(p.bias.ibA)} /> : null}
          <Row label="Bias tolerance" value={`± ${sig(p.bias.tolerancePct)} %`} />
          <Row label="Breakdown derating" value={`${sig(p.breakdownDerating * 100)} % of rating`} />
          {p.cycle ? (
            <Row
              label="Cycling"
              value={`${p.cycle.onMin} min on / ${p.cycle.offMin} min off, ΔTj ${p.cycle.deltaTjC} °C, ${p.cycle.cycles.toLocaleString('en-GB')} cycles`}
            />
          ) : null}
        </Card>
        <Card title="Duration, sample and criteria" padding="md">
          <Row label="Duration" value={`${p.durationH.toLocaleString('en-GB')} h`} />
          <Row label="Read points" value={`${p.readPointsH.join(' / ')} h`} />
          <Row label="Sample / accept" value={`${p.sampleSize} per lot / ${p.acceptNumber}`} />
          <Row label="hFE change" value={`± ${sig(p.criteria.hfeChangePct)} %`} />
          <Row label="ICBO" value={icboRuleWords(p.criteria)} />
          <Row label="VCE(sat) shift" value={`≤ ${sig(p.criteria.vcesatShiftV * 1000)} mV`} />
          <Row label="Ea / use temperature" value={`${sig(p.eaEv)} eV / ${celsius(p.useC)}`} />
          <Button
            size="sm"
            variant="quiet"
            label={`Ratings of ${p.device.partNumber}`}
            onPress={() => router.push(deviceHref(p.device.id))}
          />
        </Card>
      </Columns>
      {p.notes ? (
        <Banner tone="info" title="Notes">
          {p.notes}
        </Banner>
      ) : null}
      {maxV > 0 ? (
        <SafetyCaution
          compact
          context={`This plan puts up to ${sig(maxV)} V on every socket in a chamber at up to ${sig(p.chamberC + p.chamberBand.aboveK, 4)} °C.`}
        />
      ) : null}
      <PlanCheckPanel
        check={p.checkResult}
        stored
        title="Plan check stored with this version"
        incomplete={p.checkResult ? null : 'No check was stored with this version.'}
      />
      <Card
        title="Version history"
        description="Editing a plan writes a new version; runs point at the exact version they were booked with."
      >
        <View accessibilityRole="list" style={{ gap: space.xs }}>
          {p.versions.map((v) => (
            <View
              key={v.id}
              role="listitem"
              style={{
                flexDirection: 'row',
                flexWrap: 'wrap',
                alignItems: 'center',
                gap: space.sm,
                padding: space.sm,
                borderRadius: radius.md,
                borderWidth: v.id === p.id ? 2 : 1,
                borderColor: v.id === p.id ? colors.graphite : colors.border,
                backgroundColor: colors.surface,
              }}
            >
              <Text variant="bodyStrong">v{v.version}</Text>
              <View style={{ flex: 1, minWidth: 180 }}>
                <Text variant="body" numberOfLines={1}>
                  {v.name}
                </Text>
                <Text variant="caption" tone="muted">
                  {formatDateTime(v.createdAt)}
                  {v.createdByName ? ` · ${v.createdByName}` : ''}
                  {v.current ? ' · current' : ''}
                  {v.id === p.id ? ' · shown' : ''}
                </Text>
              </View>
              <CheckStatusPill status={v.checkStatus} size="sm" />
              {v.id !== p.id ? <Button size="sm" label={`Open v${v.version}`} onPress={() => router.push(planHref(v.id))} /> : null}
            </View>
          ))}
        </View>
      </Card>
    </>
  );
}
