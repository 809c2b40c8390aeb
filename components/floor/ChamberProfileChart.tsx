/**
 * A chamber's recent reports as two lines: the air the controller moves and the load (a probe among
 * the devices, what the methods judge). Loaded with the other charts (components/charts/chart-kit.ts).
 */
import { useState } from 'react';
import { View } from 'react-native';
import { VictoryAxis, VictoryChart, VictoryLegend, VictoryLine } from 'victory-native';
import type { FloorBoard } from '@/shared/schemas/floor';
import { endPadding } from '@/components/charts/axis';
import { timeLabel } from '@/components/floor/chart-labels';
import { colors, fonts } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';

const font = `${fonts.regular}, system-ui, sans-serif`;
const axisStyle = {
  axis: { stroke: colors.borderStrong },
  grid: { stroke: colors.border, strokeDasharray: '2,4' },
  tickLabels: { fontSize: 12, fill: colors.inkMuted, fontFamily: font, padding: 4 },
  axisLabel: { fontSize: 12, fill: colors.ink, fontFamily: font, padding: 36 },
  ticks: { stroke: colors.borderStrong, size: 4 },
};
/** Air: thick graphite; load: brick and dashed (not colour alone). */
const SERIES = [
  { key: 'airC' as const, name: 'Air', color: colors.graphite, width: 3, dash: undefined as string | undefined },
  { key: 'loadC' as const, name: 'Load (dashed)', color: '#B0411A', width: 2, dash: '6,3' },
];

export function ChamberProfileChart({ profile, testID }: { profile: NonNullable<FloorBoard['chamberProfile']>; testID?: string }) {
  const [width, setWidth] = useState(0);
  const phone = width > 0 && width < 600;
  if (profile.length < 2) {
    return (
      <Text tone="muted" testID={testID}>
        No reports from this chamber yet.
      </Text>
    );
  }
  const from = Date.parse(profile[0].t);
  const to = Date.parse(profile[profile.length - 1].t);
  const ys = profile.flatMap((p) => [p.airC, p.loadC]);
  const yMin = Math.floor(Math.min(...ys) - 5);
  const yMax = Math.ceil(Math.max(...ys) + 5);
  const hhmm = (ms: number) => timeLabel(ms, Math.max(1, to - from));
  const last = profile[profile.length - 1];
  const description =
    `Chamber reports from ${hhmm(from)} to ${hhmm(to)}: air ${Math.round(Math.min(...profile.map((p) => p.airC)))} to ` +
    `${Math.round(Math.max(...profile.map((p) => p.airC)))} °C, load ${Math.round(Math.min(...profile.map((p) => p.loadC)))} to ` +
    `${Math.round(Math.max(...profile.map((p) => p.loadC)))} °C; last air ${last.airC.toFixed(1)} °C, load ${last.loadC.toFixed(1)} °C.`;
  return (
    <View
      testID={testID}
      onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))}
      accessible
      accessibilityRole="image"
      accessibilityLabel={description}
    >
      {width > 0 ? (
        <>
          <VictoryChart
            width={width}
            height={phone ? 220 : 280}
            padding={{ top: 12, bottom: 44, left: 56, right: endPadding(hhmm(to), phone ? 12 : 24) }}
            domain={{ x: [from, Math.max(to, from + 1)], y: [yMin, yMax] }}
            scale={{ x: 'time' }}
          >
            <VictoryAxis tickCount={phone ? 3 : 6} tickFormat={(t: number) => hhmm(t)} style={axisStyle} />
            <VictoryAxis dependentAxis label="°C" tickFormat={(t: number) => `${t}`} style={axisStyle} />
            {SERIES.map((s) => (
              <VictoryLine
                key={s.key}
                data={profile.map((p) => ({ x: Date.parse(p.t), y: p[s.key] }))}
                style={{ data: { stroke: s.color, strokeWidth: s.width, strokeDasharray: s.dash } }}
              />
            ))}
          </VictoryChart>
          <VictoryLegend
            standalone
            width={width}
            height={46}
            itemsPerRow={2}
            gutter={24}
            orientation="horizontal"
            style={{ labels: { fontSize: 12, fill: colors.ink, fontFamily: font } }}
            data={SERIES.map((s) => ({ name: s.name, symbol: { fill: s.color, type: 'square' } }))}
          />
        </>
      ) : null}
    </View>
  );
}
