import { useState } from 'react';
import { View } from 'react-native';
import { VictoryAxis, VictoryBar, VictoryChart, VictoryLegend, VictoryStack } from 'victory-native';
import type { Utilisation } from '@/shared/schemas/replan';
import { axisStyle, legendStyle } from '@/components/trends/chart-style';
import { Text } from '@/components/ui/Text';
import { capacitySeries, compact, weekLabel, weekTick } from './capacity-model';

/** Socket-hours per week, stacked: stressed, idle and lost to faults add up to booked. */
export function UtilisationChart({ data, rig }: { data: Utilisation; rig: string | null }) {
  const [width, setWidth] = useState(0);
  const phone = width > 0 && width < 600;
  const series = capacitySeries(data, rig);
  const label =
    `Socket-hours per week for ${rig ?? 'all rigs'}: ` +
    series.weeks
      .map(
        (w, i) =>
          `week of ${weekLabel(w)}: booked ${series.booked[i]}, stressed ${series.stressed[i]}, idle ${series.idle[i]}, lost ${series.lost[i]}`,
      )
      .join('; ') +
    '.';
  const parts = [
    { key: 'stressed', name: 'Stressed', color: '#1F6B3F', values: series.stressed },
    { key: 'idle', name: 'Idle', color: '#B5BAC1', values: series.idle },
    { key: 'lost', name: 'Lost to faults', color: '#A3211B', values: series.lost },
  ];
  return (
    <View
      onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))}
      accessible
      accessibilityRole="image"
      accessibilityLabel={label}
      testID="utilisation-chart"
    >
      {series.booked.every((b) => b === 0) ? (
        <Text tone="muted">No socket-hours booked in these weeks.</Text>
      ) : width > 0 ? (
        <VictoryChart
          width={width}
          height={phone ? 240 : 300}
          padding={{ top: 40, bottom: 48, left: 72, right: phone ? 12 : 24 }}
          // Half a week's slot on each side, so the first bar never covers the y-axis labels.
          domainPadding={{ x: Math.max(16, (width - 96) / Math.max(1, series.weeks.length) / 2) }}
        >
          <VictoryLegend
            x={phone ? 8 : 64}
            y={0}
            orientation="horizontal"
            gutter={16}
            style={legendStyle}
            data={parts.map((p) => ({ name: p.name, symbol: { fill: p.color, type: 'square' } }))}
          />
          <VictoryAxis
            tickValues={series.weeks.map((_, i) => i + 1)}
            tickFormat={(t: number) => weekTick(series.weeks[t - 1] ?? '')}
            style={axisStyle}
            fixLabelOverlap
          />
          <VictoryAxis dependentAxis tickFormat={(t: number) => compact(t)} style={axisStyle} />
          <VictoryStack>
            {parts.map((p) => (
              <VictoryBar key={p.key} data={p.values.map((y, i) => ({ x: i + 1, y }))} style={{ data: { fill: p.color } }} barRatio={0.7} />
            ))}
          </VictoryStack>
        </VictoryChart>
      ) : null}
    </View>
  );
}
