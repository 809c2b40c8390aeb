import { useLocalSearchParams } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import type { FloorBoard, FloorSocket } from '@/shared/schemas/floor';
import { formatDateTime } from '@/components/common/format';
import { boardCaption } from './board-caption';
import { HOTTEST_RULE_TEXT } from '@/shared/domain/hottest-sockets';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useFloorStream, useRigBoard, useRigChart, type ChartSpan } from '@/components/queries/floor';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { LiveIndicator } from './LiveIndicator';
import { RigChart } from '@/components/charts/LazyCharts';
import { fmtHours, rigState } from './rig-state';
import { SocketBoard, TempLegend } from './SocketBoard';
import { fmtC } from './temp-scale';
import { grouped } from '@/shared/domain/format';
import { swingText } from '@/components/runs/RunCycles';
import { TripResetDialog, rigAnswerText } from './TripResetDialog';
import { useCan } from '@/components/queries/auth';
import { Banner } from '@/components/ui/Banner';
import { RigRuns } from './RigRuns';
import { ChamberBoard, ChamberCaution } from './ChamberBoard';
import { SocketThermal } from './SocketThermal';
import type { TripResetResult } from '@/shared/schemas/protection';

const SPANS = [
  { value: '15m', label: '15 min' },
  { value: '1h', label: '1 hour' },
  { value: '6h', label: '6 hours' },
  { value: '24h', label: '24 hours' },
  { value: '7d', label: '7 days' },
  { value: '30d', label: '30 days' },
  { value: '1y', label: '1 year' },
] as const;
const MAX_PLOTTED = 8;

function Row({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.md }} testID={testID}>
      <Text variant="label" tone="muted">
        {label}
      </Text>
      <Text variant="label">{value}</Text>
    </View>
  );
}

function SocketDetail({
  s,
  plotted,
  onTogglePlot,
  onResetTrip,
}: {
  s: FloorSocket;
  plotted: boolean;
  onTogglePlot: () => void;
  /** Offered for a tripped socket of a stressing run to those who may reset it. */
  onResetTrip?: () => void;
}) {
  const fmt = (n: number | null, unit: string, digits = 3) => (n === null ? '—' : `${Number(n.toPrecision(digits))} ${unit}`);
  return (
    <Card
      title={`Socket ${s.index}`}
      description={s.serial ? `Device ${s.serial}` : 'No device loaded by the current run'}
      testID="socket-detail"
      padding="md"
    >
      <View style={{ gap: space.xxs }}>
        <Row label="Case temperature" value={fmtC(s.caseC)} />
        <Row label="Bias voltage" value={fmt(s.vV, 'V')} />
        <Row
          label="Current"
          value={s.iA === null ? '—' : Math.abs(s.iA) < 1e-3 ? `${(s.iA * 1e9).toPrecision(3)} nA` : `${(s.iA * 1e3).toPrecision(3)} mA`}
        />
        {s.junction ? <Row label="Junction (estimated)" value={fmtC(s.junction.tjC)} testID="socket-junction" /> : null}
        <Row label="Bias" value={s.tripped ? 'Tripped (latched off)' : s.caseC === null ? '—' : s.biasOn ? 'On' : 'Off'} />
        {s.tripReason ? <Row label="Trip reason" value={s.tripReason} /> : null}
        {s.cycles ? <Row label="Cycles" value={`${grouped(s.cycles.done)} / ${grouped(s.cycles.target)}`} /> : null}
        {s.cycles ? <Row label="Last ΔTj (from the TSP)" value={swingText(s.cycles.lastDTjLowC, s.cycles.lastDTjHighC)} /> : null}
      </View>
      {s.junction ? (
        <Text variant="caption" tone="muted" testID="socket-junction-how">
          {`Estimated as case ${fmtC(s.junction.caseC)} + θjc ${Number(s.junction.thetaJcCPerW.toPrecision(3))} °C/W × ${Number(
            s.junction.powerW.toPrecision(3),
          )} W (|V × I| of this reading): the same estimate protection and stress credit use. Not a measurement.`}
        </Text>
      ) : null}
      <Button size="sm" variant="secondary" label={plotted ? 'Remove from chart' : 'Plot on the chart'} onPress={onTogglePlot} />
      {onResetTrip ? <Button size="sm" variant="danger" label="Reset trip…" onPress={onResetTrip} testID="reset-trip" /> : null}
    </Card>
  );
}

function Board({ board, code }: { board: FloorBoard; code: string }) {
  const { gtTablet, gtPhone } = useBreakpoints();
  const [selected, setSelected] = useState<number | null>(null);
  const [plotted, setPlotted] = useState<number[] | null>(null);
  const [span, setSpan] = useState<ChartSpan>('1h');
  const can = useCan();
  const [resetting, setResetting] = useState<FloorSocket | null>(null);
  const [resetDone, setResetDone] = useState<TripResetResult | null>(null);
  const chart = useRigChart(code, span, plotted ?? []);
  const shownSockets = plotted ?? chart.data?.sockets.map((s) => s.socket) ?? [];
  const sel = selected !== null ? (board.sockets.find((s) => s.index === selected) ?? null) : null;
  const toggle = (i: number) => {
    const base = shownSockets;
    setPlotted(base.includes(i) ? base.filter((x) => x !== i) : [...base, i].slice(-MAX_PLOTTED));
  };
  const t = board.tile;
  return (
    <>
      <View style={{ flexDirection: gtTablet ? 'row' : 'column', gap: space.lg, alignItems: 'flex-start' }}>
        <Card
          title="Socket board"
          description={boardCaption(board.sampleAt, board.tile.run)}
          style={{ flex: gtTablet ? 3 : undefined, alignSelf: 'stretch' }}
        >
          <SocketBoard sockets={board.sockets} selected={selected} onSelect={setSelected} cell={gtPhone ? 60 : 52} />
          <TempLegend />
        </Card>
        <View style={{ flex: gtTablet ? 2 : undefined, alignSelf: 'stretch', gap: space.md }}>
          <Card title="Chamber" padding="md">
            <Row label="Chamber" value={fmtC(t.chamberC)} />
            <Row label="Setpoint" value={fmtC(t.setpointC)} />
            {t.humidityPct !== null ? <Row label="Humidity" value={`${t.humidityPct.toFixed(0)} % RH`} /> : null}
            <Row label="Hottest case" value={fmtC(t.maxCaseC)} />
            <Row label="Sockets" value={`${t.powered} powered · ${t.tripped} tripped · ${t.empty} empty`} />
            <Row label="Open alarms" value={String(t.openAlarms)} />
            {t.run?.hoursToNextReadPoint != null ? (
              <Row label="Next read point" value={`${t.run.nextReadPointH} h, in ${fmtHours(t.run.hoursToNextReadPoint)} of stress`} />
            ) : null}
            <Row label="Last heard" value={formatDateTime(t.lastSeenAt)} />
          </Card>
          <RigRuns tile={t} />
          {resetDone ? (
            <Banner tone={resetDone.rig.bias.status === 'confirmed' ? 'ok' : 'warn'} testID="trip-reset-done">
              {`Socket ${resetDone.socket} reset (plan check ${resetDone.planCheck.status}). ${rigAnswerText(resetDone)}`}
            </Banner>
          ) : null}
          {sel ? (
            <SocketDetail
              s={sel}
              plotted={shownSockets.includes(sel.index)}
              onTogglePlot={() => toggle(sel.index)}
              onResetTrip={sel.tripped && t.run?.state === 'stressing' && can('run.reset-trip') ? () => setResetting(sel) : undefined}
            />
          ) : null}
          {sel && t.run ? <SocketThermal code={code} socket={sel.index} /> : null}
        </View>
      </View>
      <Card
        title="Temperatures"
        description={plotted ? 'Chamber and the sockets you chose.' : `Chamber and ${HOTTEST_RULE_TEXT}; tap a socket to choose others.`}
      >
        <SegmentedChoice label="Period" hideLabel options={SPANS} value={span} onChange={setSpan} testID="chart-span" />
        <QueryState query={chart} loadingLabel="Loading the chart…" errorTitle="Could not load the chart" loadingVariant="spinner">
          {(c) => <RigChart chart={c} testID="rig-chart" />}
        </QueryState>
      </Card>
      <TripResetDialog
        socket={resetting}
        rigCode={code}
        run={t.run}
        onClose={() => setResetting(null)}
        onDone={(r) => {
          setResetting(null);
          setResetDone(r);
        }}
      />
    </>
  );
}

/** One rig: its board coloured by case temperature, the chamber, the chart. */
export function RigScreen() {
  const { code: raw } = useLocalSearchParams<{ code: string }>();
  const code = String(raw ?? '').toUpperCase();
  const board = useRigBoard(code);
  const stream = useFloorStream();
  const tile = board.data?.tile;
  const s = tile ? rigState(tile) : null;
  return (
    <Screen width="wide" testID="rig-screen">
      <Header
        eyebrow="Floor"
        title={tile?.chamber ? `Chamber ${code}` : `Rig ${code}`}
        subtitle={
          tile
            ? `${tile.name}${tile.location ? ` · ${tile.location}` : ''} · ${
                tile.chamber ? `${tile.socketCount} devices` : `${tile.socketCount} sockets`
              }, up to ${tile.maxTempC} °C`
            : undefined
        }
        actions={
          <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center' }}>
            {s ? <StatusPill tone={s.tone} label={s.label} /> : null}
            <LiveIndicator state={stream} />
          </View>
        }
      />
      {tile?.chamber ? (
        <ChamberCaution chamber={tile.chamber} code={tile.code} />
      ) : (
        <SafetyCaution context={tile ? `Rig ${tile.code} runs up to ${tile.maxTempC} °C with bias voltage on the board.` : undefined} />
      )}
      <QueryState query={board} loadingLabel={`Loading rig ${code}…`} errorTitle={`Could not load rig ${code}`}>
        {(b) => (b.tile.chamber ? <ChamberBoard board={b} /> : <Board board={b} code={code} />)}
      </QueryState>
    </Screen>
  );
}
