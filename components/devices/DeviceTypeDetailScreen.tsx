import { router, useLocalSearchParams, type Href } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { leakageDoublingC } from '@/shared/physics/doubling';
import { ICBO_REF_C } from '@/shared/safety/plan-rules/types';
import type { DeviceType } from '@/shared/schemas/devices';
import { PLAN_KIND_LABEL } from '@/shared/domain/stress';
import { formatDateTime } from '@/components/common/format';
import { Columns } from '@/components/layout/Content';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useCan } from '@/components/queries/auth';
import { useDeviceType } from '@/components/queries/device-types';
import { usePlans } from '@/components/queries/plans';
import { colors, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { Badge } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { CheckStatusPill } from '@/components/plans/CheckStatusPill';
import { DeviceTypeForm } from '@/components/forms/LazyForms';
import { lotHref } from './links';
import { LotTable } from './LotTable';
import { amps, celsius, sig, volts, watts } from './format';
import { BVCBO_HELP } from './help-bvcbo';
import { NewLotForm } from '@/components/forms/LazyForms';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** One device type: its ratings grouped as on a data sheet, its lots, and the plans written for it. */
export function DeviceTypeDetailScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const valid = typeof id === 'string' && UUID.test(id);
  const device = useDeviceType(valid ? id : undefined);
  const may = useCan();
  const [editing, setEditing] = useState(false);
  const [addingLot, setAddingLot] = useState(false);
  const [notice, setNotice] = useState<string | null>(null);

  if (!valid) {
    return (
      <Screen>
        <EmptyState
          title="No such device type"
          message="The address does not name a device type."
          action={<Button label="All device types" onPress={() => router.replace('/devices' as Href)} />}
        />
      </Screen>
    );
  }

  return (
    <Screen width="wide" testID="device-type-screen">
      <QueryState query={device} loadingLabel="Loading the device type…" errorTitle="Could not load this device type">
        {(d) => (
          <>
            <Header
              eyebrow="Device type"
              title={d.partNumber}
              subtitle={d.description || undefined}
              actions={
                <>
                  <Button label="All device types" variant="quiet" onPress={() => router.push('/devices' as Href)} />
                  {may('deviceType.edit') && !editing ? (
                    <Button
                      label="Edit ratings"
                      onPress={() => {
                        setNotice(null);
                        setEditing(true);
                      }}
                      testID="edit-device-type"
                    />
                  ) : null}
                </>
              }
            />
            {notice ? (
              <Banner tone="ok" action={<Button size="sm" variant="quiet" label="Dismiss" onPress={() => setNotice(null)} />}>
                {notice}
              </Banner>
            ) : null}
            {editing ? (
              <DeviceTypeForm
                device={d}
                onCancel={() => setEditing(false)}
                onDone={(u) => {
                  setEditing(false);
                  setNotice(
                    `${u.partNumber} saved. Plans saved earlier keep the check they were saved with; save a new version to re-check one.`,
                  );
                }}
              />
            ) : (
              <Ratings d={d} />
            )}

            <View style={{ gap: space.sm }}>
              <View
                style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center', flexWrap: 'wrap', gap: space.sm }}
              >
                <Text variant="heading" heading={2}>
                  Lots
                </Text>
                {may('lot.edit') && !addingLot ? (
                  <Button label="Register a lot" onPress={() => setAddingLot(true)} testID="add-lot" />
                ) : null}
              </View>
              {addingLot ? (
                <NewLotForm
                  deviceTypeId={d.id}
                  partNumber={d.partNumber}
                  onCancel={() => setAddingLot(false)}
                  onCreated={(lot) => {
                    setAddingLot(false);
                    router.push(lotHref(lot.id));
                  }}
                />
              ) : null}
              <LotTable deviceTypeId={d.id} />
            </View>

            <PlansFor deviceTypeId={d.id} canWrite={may('plan.edit')} />
          </>
        )}
      </QueryState>
    </Screen>
  );
}

function Rating({ label, value, help }: { label: string; value: string; help?: string }) {
  return (
    <View style={{ gap: 2, paddingVertical: space.xxs }}>
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.sm }}>
        <Text variant="label" tone="muted">
          {label}
        </Text>
        <Text variant="bodyStrong">{value}</Text>
      </View>
      {help ? (
        <Text variant="caption" tone="subtle">
          {help}
        </Text>
      ) : null}
    </View>
  );
}

function Ratings({ d }: { d: DeviceType }) {
  return (
    <Columns>
      <Card title="Breakdown" padding="md">
        <Rating label="BVCBO" value={volts(d.bvcboV)} help={BVCBO_HELP.split('. ')[0] + '.'} />
        <Rating
          label="BVCEO"
          value={d.bvceoV === null ? `not given (n = ${sig(d.breakdownN)})` : volts(d.bvceoV)}
          help="Collector-emitter breakdown, base open. Lower than BVCBO: the gain multiplies the avalanche current."
        />
        <Rating label="BVEBO" value={volts(d.bveboV)} help="Emitter-base breakdown. Avalanching it permanently lowers the gain." />
      </Card>
      <Card title="Power and thermal" padding="md">
        <Rating label="Power rating" value={`${watts(d.pMaxW)} at ${d.pRatedAtC} °C case`} />
        <Rating label="Tj max" value={celsius(d.tjMaxC)} />
        <Rating label="IC max" value={amps(d.icMaxA)} />
        <Rating label="θjc" value={`${sig(d.thetaJcCPerW)} °C/W`} help="Junction to case: sets the limit when the case is held." />
        <Rating
          label="θja"
          value={`${sig(d.thetaJaCPerW)} °C/W`}
          help="Junction to free air: used for the junction in a chamber and for runaway."
        />
        <Rating
          label="Second breakdown"
          value={`knee ${sig(d.sbKneeV)} V, slope n ${sig(d.sbSlopeN)}`}
          help="Forward SOA above the knee: I·V^n = constant. Powered plans are checked against it."
        />
      </Card>
      <Card title="Gain and leakage" padding="md">
        <Rating label="hFE" value={`${sig(d.betaRef)} at ${amps(d.betaRefIcA)}, ${d.betaRefTC} °C`} />
        <Rating label="XTB" value={sig(d.xtb)} help="Gain rises as (T/T_ref)^XTB, kelvin." />
        <Rating
          label="ICBO at 25 °C"
          value={d.icboRefA === null ? 'not given' : amps(d.icboRefA)}
          help={d.icboHotA === null ? 'Taken to double every 10 °C (no hot-leakage point).' : undefined}
        />
        <Rating
          label="Hot-leakage point"
          value={
            d.icboHotA === null || d.icboHotC === null || d.icboHotVcbV === null
              ? 'not given'
              : `${amps(d.icboHotA)} at ${sig(d.icboHotC)} °C, VCB ${sig(d.icboHotVcbV)} V`
          }
          help={
            d.icboHotA !== null && d.icboHotC !== null && d.icboRefA !== null
              ? `Doubles every ${sig(leakageDoublingC({ i1A: d.icboRefA, t1C: ICBO_REF_C, i2A: d.icboHotA, t2C: d.icboHotC }))} °C between the two points.`
              : undefined
          }
        />
        <Text variant="caption" tone="subtle">
          Updated {formatDateTime(d.updatedAt)}
        </Text>
      </Card>
    </Columns>
  );
}

function PlansFor({ deviceTypeId, canWrite }: { deviceTypeId: string; canWrite: boolean }) {
  const plans = usePlans({ deviceTypeId });
  return (
    <View style={{ gap: space.sm }}>
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center', flexWrap: 'wrap', gap: space.sm }}>
        <Text variant="heading" heading={2}>
          Stress plans
        </Text>
        {canWrite ? (
          <Button label="New plan for this part" onPress={() => router.push(`/plans/new?deviceTypeId=${deviceTypeId}` as Href)} />
        ) : null}
      </View>
      <QueryState
        query={plans}
        loadingLabel="Loading plans…"
        isEmpty={(l) => l.length === 0}
        empty={<EmptyState title="No plans for this part yet" />}
      >
        {(list) => (
          <View style={{ gap: space.xs }}>
            {list.map((p) => (
              <View
                key={p.id}
                style={{
                  flexDirection: 'row',
                  flexWrap: 'wrap',
                  alignItems: 'center',
                  gap: space.sm,
                  padding: space.sm,
                  borderRadius: 10,
                  borderWidth: 1,
                  borderColor: colors.border,
                  backgroundColor: colors.surface,
                }}
              >
                <View style={{ flex: 1, minWidth: 220, gap: 2 }}>
                  <Text variant="bodyStrong">{p.name}</Text>
                  <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
                    <Badge label={PLAN_KIND_LABEL[p.kind]} />
                    <Badge label={`v${p.version}`} />
                  </View>
                </View>
                <CheckStatusPill status={p.checkStatus} size="sm" />
                <Button
                  size="sm"
                  label="Open"
                  accessibilityLabel={`Open plan ${p.name}`}
                  onPress={() => router.push(`/plans/${p.id}` as Href)}
                />
              </View>
            ))}
          </View>
        )}
      </QueryState>
    </View>
  );
}
