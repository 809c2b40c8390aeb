/**
 * A chamber's page body (rig kind 'chamber', reached from its floor tile): its newest report, the
 * programme's step and cycle count, the devices loaded, excursion alarms, the run on it and the air
 * and load of its recent reports.
 */
import { View } from 'react-native';
import type { FloorBoard, FloorChamber } from '@/shared/schemas/floor';
import { formatDateTime } from '@/components/common/format';
import { ChamberProfileChart } from '@/components/charts/LazyCharts';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Card } from '@/components/ui/Card';
import { Text } from '@/components/ui/Text';
import { grouped } from '@/shared/domain/format';
import { CHAMBER_STEP_LABEL } from '@/shared/domain/chamber-methods';
import { CHAMBER_TYPE_LABEL, chamberCautionText, chamberStepText } from './chamber-words';
import { RigRuns } from './RigRuns';
import { fmtC } from './temp-scale';

function Row({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.md, flexWrap: 'wrap' }}>
      <Text variant="label" tone="muted">
        {label}
      </Text>
      <Text variant="label" testID={testID}>
        {value}
      </Text>
    </View>
  );
}

/** The chamber's caution: hot (and frozen) surfaces or a pressure vessel; its own protection comes first. */
export function ChamberCaution({ chamber, code }: { chamber: FloorChamber; code: string }) {
  return (
    <Banner tone="warn" title="Safety caution" testID="chamber-caution">
      <View style={{ gap: space.xxs }}>
        <Text variant="bodyStrong">{`${CHAMBER_TYPE_LABEL[chamber.type]} ${code}`}</Text>
        <Text variant="body">{chamberCautionText(chamber)}</Text>
      </View>
    </Banner>
  );
}

export function ChamberBoard({ board }: { board: FloorBoard }) {
  const { gtTablet } = useBreakpoints();
  const t = board.tile;
  const c = t.chamber!;
  return (
    <>
      <View style={{ flexDirection: gtTablet ? 'row' : 'column', gap: space.lg, alignItems: 'flex-start' }}>
        <Card title="Chamber now" padding="md" style={{ flex: gtTablet ? 3 : undefined, alignSelf: 'stretch' }} testID="chamber-now">
          <Text variant="title" testID="chamber-load">
            {`Load ${fmtC(c.loadC)}`}
          </Text>
          <Text variant="bodyStrong" testID="chamber-step">
            {chamberStepText(c, t.run?.state ?? null)}
          </Text>
          <View style={{ gap: space.xxs }}>
            <Row label="Air" value={fmtC(c.airC)} testID="chamber-air" />
            <Row label="Air set point" value={fmtC(c.setpointC)} />
            {c.humidityPct !== null ? <Row label="Humidity" value={`${c.humidityPct.toFixed(0)} % RH`} /> : null}
            {c.pressureKPa !== null ? (
              <Row
                label="Vessel pressure (absolute)"
                value={`${c.pressureKPa.toFixed(0)} kPa${c.maxPressureKPa !== null ? ` (rated ${c.maxPressureKPa} kPa)` : ''}`}
              />
            ) : null}
            {c.doorOpen !== null ? <Row label="Door" value={c.doorOpen ? 'Open' : 'Closed'} /> : null}
            {c.cycles ? (
              <Row label="Cycles counted" value={`${grouped(c.cycles.done)} of ${grouped(c.cycles.target)}`} testID="chamber-cycles" />
            ) : null}
            <Row label="Devices loaded" value={`${grouped(c.loaded)} of ${grouped(t.socketCount)} positions`} testID="chamber-devices" />
            <Row label="Excursion alarms" value={String(c.excursionAlarms)} testID="chamber-excursions" />
            <Row label="Open alarms" value={String(t.openAlarms)} />
            <Row label="Range" value={`${c.minTempC !== null ? fmtC(c.minTempC, 0) : 'room'} to ${fmtC(t.maxTempC, 0)}`} />
            <Row label="Last report" value={formatDateTime(c.reportAt)} />
          </View>
          <Text variant="caption" tone="muted">
            {c.cycles
              ? `The load is a probe among the devices: a cycle counts once the load has reached each extreme and dwelt there (${CHAMBER_STEP_LABEL.hot.toLowerCase()}, then ${CHAMBER_STEP_LABEL.cold.toLowerCase()}).`
              : 'The load is a probe among the devices: stress hours count only while it is inside the plan’s band.'}
          </Text>
        </Card>
        <View style={{ flex: gtTablet ? 2 : undefined, alignSelf: 'stretch', gap: space.md }}>
          <RigRuns tile={t} />
        </View>
      </View>
      <Card title="Air and load" description="The chamber’s recent reports: the air it moves and the load the devices see.">
        <ChamberProfileChart profile={board.chamberProfile ?? []} testID="chamber-chart" />
      </Card>
    </>
  );
}
