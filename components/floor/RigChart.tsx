import { useState } from 'react';
import { View } from 'react-native';
import { VictoryAxis, VictoryChart, VictoryLegend, VictoryLine } from 'victory-native';
import type { FloorChart } from '@/shared/schemas/floor';
import { formatLocalTime } from '@/shared/domain/format';
import { endPadding } from '@/components/charts/axis';
import { HOLD_PHASE_LABEL, type HoldPhase } from '@/shared/holds/words';
import { KEPT_RAW_CAPTION, TIER_CAPTION } from '@/shared/domain/telemetry-tiers';
import { bucketText, timeLabel } from '@/components/floor/chart-labels';
import { colors, fonts, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';

const font = `${fonts.regular}, system-ui, sans-serif`;
const axisStyle = {
  axis: { stroke: colors.borderStrong },
  grid: { stroke: colors.border, strokeDasharray: '2,4' },
  tickLabels: { fontSize: 12, fill: colors.inkMuted, fontFamily: font, padding: 4 },
  axisLabel: { fontSize: 12, fill: colors.ink, fontFamily: font, padding: 36 },
  ticks: { stroke: colors.borderStrong, size: 4 },
};

/** Chamber: thick graphite line. Sockets: distinct colours AND dash patterns (not colour alone). */
const CHAMBER = { color: colors.graphite, width: 3, dash: undefined as string | undefined };
const SOCKET_SERIES = [
  { color: '#B0411A', dash: undefined },
  { color: '#1E4F86', dash: '6,3' },
  { color: '#1F6B3F', dash: '2,3' },
  { color: '#6B3FA0', dash: '8,3,2,3' },
  { color: '#7A4F00', dash: '10,4' },
  { color: '#0F6E77', dash: '4,4' },
  { color: '#A3211B', dash: '1,3' },
  { color: '#57524A', dash: '12,3' },
];

/** Hold steps: a vertical line each (solid = bias still on, dashed = bias off), named in the list under the chart. */
const HOLD_MARK: Record<HoldPhase, { color: string; dash?: string }> = {
  'cool-under-bias': { color: '#1E4F86' },
  'oven-shared': { color: '#7A4F00' },
  'bias-off': { color: '#A3211B', dash: '5,3' },
  'safe-to-open': { color: '#1F6B3F', dash: '5,3' },
};

export function RigChart({ chart, testID }: { chart: FloorChart; testID?: string }) {
  const [width, setWidth] = useState(0);
  const phone = width > 0 && width < 600;
  const series = [
    { name: 'Chamber', style: CHAMBER, data: chart.chamber },
    ...chart.sockets.map((s, i) => ({
      name: `Socket ${s.socket} case`,
      style: { ...SOCKET_SERIES[i % SOCKET_SERIES.length], width: 2 },
      data: s.points,
    })),
  ].filter((s) => s.data.length > 0);
  const ys = series.flatMap((s) => s.data.map((p) => p.avg));
  const yMin = ys.length ? Math.floor(Math.min(...ys) - 2) : 0;
  const yMax = ys.length ? Math.ceil(Math.max(...ys) + 2) : 100;
  const from = Date.parse(chart.from);
  const to = Date.parse(chart.to);
  const hhmm = (ms: number) => timeLabel(ms, to - from);
  const last = (d: { avg: number }[]) => (d.length ? `${d[d.length - 1].avg.toFixed(1)} °C` : 'no data');
  const marks = (chart.holdSteps ?? []).filter((m) => Date.parse(m.t) >= from && Date.parse(m.t) <= to);
  const hhmmss = (ms: number) => formatLocalTime(ms, true);
  // "Safe to open" straight from a biased step also means bias came off there.
  const markText = marks.map((m, i) => {
    const prev = marks
      .slice(0, i)
      .reverse()
      .find((x) => x.runCode === m.runCode);
    const biasOffToo = m.step === 'safe-to-open' && !!prev && (prev.step === 'cool-under-bias' || prev.step === 'oven-shared');
    return `${hhmmss(Date.parse(m.t))} ${m.runCode}: ${biasOffToo ? 'Bias off; safe to open' : HOLD_PHASE_LABEL[m.step]}`;
  });
  const description =
    `Temperatures from ${hhmm(from)} to ${hhmm(to)}: ` +
    series.map((s) => `${s.name} last ${last(s.data)}`).join('; ') +
    '.' +
    (markText.length ? ` Hold steps: ${markText.join('; ')}.` : '');
  // Which tier the chart read (raw, per-minute or hourly; raw kept around events): shown with or without data.
  const tierCaption = (
    <Text variant="caption" tone="muted" style={{ paddingHorizontal: space.xs }} testID="chart-tier">
      {chart.keptRaw ? KEPT_RAW_CAPTION : TIER_CAPTION[chart.source]}, one point per {bucketText(chart.bucketMs)}.
    </Text>
  );
  return (
    <View
      testID={testID}
      onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))}
      accessible
      accessibilityRole="image"
      accessibilityLabel={description}
    >
      {series.length === 0 ? (
        <>
          <Text tone="muted">No telemetry in this period.</Text>
          {tierCaption}
        </>
      ) : width > 0 ? (
        <>
          <VictoryChart
            width={width}
            height={phone ? 240 : 300}
            padding={{ top: 12, bottom: 44, left: 56, right: endPadding(hhmm(to), phone ? 12 : 24) }}
            domain={{ x: [from, to], y: [yMin, yMax] }}
            scale={{ x: 'time' }}
          >
            <VictoryAxis tickCount={phone ? 3 : 6} tickFormat={(t: number) => hhmm(t)} style={axisStyle} />
            {/* Temperatures in °C: 0 °C means nothing here, so the axis spans the readings (a 145 ± 3 °C band would be a flat line from 0). */}
            <VictoryAxis dependentAxis label="°C" tickFormat={(t: number) => `${t}`} style={axisStyle} />
            {series.map((s) => (
              <VictoryLine
                key={s.name}
                data={s.data.map((p) => ({ x: Date.parse(p.t), y: p.avg }))}
                style={{ data: { stroke: s.style.color, strokeWidth: s.style.width, strokeDasharray: s.style.dash } }}
              />
            ))}
            {marks.map((m, i) => (
              <VictoryLine
                key={`mark-${i}`}
                data={[
                  { x: Date.parse(m.t), y: yMin },
                  { x: Date.parse(m.t), y: yMax },
                ]}
                style={{ data: { stroke: HOLD_MARK[m.step].color, strokeWidth: 2, strokeDasharray: HOLD_MARK[m.step].dash } }}
              />
            ))}
          </VictoryChart>
          <VictoryLegend
            standalone
            width={width}
            // One entry per row on a phone: "Socket 27 case (dashed)" does not fit half a phone width.
            height={Math.ceil(series.length / (phone ? 1 : 4)) * 26 + 20}
            itemsPerRow={phone ? 1 : 4}
            gutter={phone ? 12 : 24}
            orientation="horizontal"
            style={{ labels: { fontSize: 12, fill: colors.ink, fontFamily: font } }}
            data={series.map((s) => ({
              name: `${s.name}${s.style.dash ? ' (dashed)' : ''}`,
              symbol: { fill: s.style.color, type: 'square' },
            }))}
          />
          {marks.length ? (
            <View style={{ paddingHorizontal: space.xs, gap: 2 }} testID="hold-steps">
              <Text variant="label">Hold steps (vertical lines; dashed once bias is off)</Text>
              {marks.map((m, i) => (
                <View key={`step-${i}`} style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center' }}>
                  <View style={{ width: 14, height: 3, backgroundColor: HOLD_MARK[m.step].color }} />
                  <Text variant="caption">{markText[i]}</Text>
                </View>
              ))}
            </View>
          ) : null}
          {tierCaption}
        </>
      ) : null}
    </View>
  );
}
