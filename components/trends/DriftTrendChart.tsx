import { useState } from 'react';
import { View } from 'react-native';
import { VictoryArea, VictoryAxis, VictoryChart, VictoryLegend, VictoryLine, VictoryScatter } from 'victory-native';
import { LOT_VERDICT_LABEL } from '@/shared/domain/verdicts';
import type { LotSummary } from '@/shared/schemas/analytics';
import { colors, space } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import { axisStyle, legendStyle, LIMIT_FILL, LIMIT_STROKE, seriesAt } from './chart-style';
import { sig } from './format';
import { domainWithZero, endPadding } from '@/components/charts/axis';

interface Props {
  lots: LotSummary[];
  testID?: string;
}

/**
 * Mean hFE change from time zero per lot (one line each), read points on the x axis, the plan's
 * ±limit as a shaded band with dashed edges. Lines differ by colour, marker and dash.
 */
export function DriftTrendChart({ lots, testID }: Props) {
  const [width, setWidth] = useState(0);
  const shown = lots.filter((l) => l.hfeTrend.length > 1);
  const phone = width > 0 && width < 600;
  const height = phone ? 260 : 320;
  const limit = Math.max(...shown.map((l) => l.hfeLimitPct ?? 0), 0) || 15;
  const ticks = [...new Set(shown.flatMap((l) => l.hfeTrend.map((p) => p.hours)))].sort((a, b) => a - b);
  const maxX = Math.max(...ticks, 1);
  const ys = shown.flatMap((l) => l.hfeTrend.map((p) => p.value));
  // A drift from time zero: the axis always holds 0 and the ±limit band.
  const [lo, hi] = domainWithZero([-limit, limit, ...ys], { padFraction: 0.05 });
  const yMin = Math.floor(lo);
  const yMax = Math.ceil(hi);
  const description =
    `Mean hFE change by lot: ` +
    shown
      .map((l) => `${l.lotCode} ${sig(l.hfeTrend[l.hfeTrend.length - 1]?.value)} % at ${l.hfeTrend[l.hfeTrend.length - 1]?.hours} h`)
      .join('; ') +
    `. Limit ±${limit} %.`;

  return (
    <View
      testID={testID}
      onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))}
      accessible
      accessibilityRole="image"
      accessibilityLabel={description}
    >
      {shown.length === 0 ? (
        <Text tone="muted">No lot has readings after time zero yet.</Text>
      ) : width > 0 ? (
        <>
          <VictoryChart
            width={width}
            height={height}
            padding={{ top: 16, bottom: 48, left: 56, right: endPadding(String(maxX), phone ? 12 : 24) }}
            domain={{ x: [0, maxX], y: [yMin, yMax] }}
          >
            <VictoryArea
              data={[
                { x: 0, y: limit, y0: -limit },
                { x: maxX, y: limit, y0: -limit },
              ]}
              style={{ data: { fill: LIMIT_FILL, opacity: 0.45, stroke: 'none' } }}
            />
            {[limit, -limit].map((y) => (
              <VictoryLine
                key={y}
                data={[
                  { x: 0, y },
                  { x: maxX, y },
                ]}
                style={{ data: { stroke: LIMIT_STROKE, strokeWidth: 1.5, strokeDasharray: '6,4' } }}
              />
            ))}
            <VictoryAxis
              offsetY={48}
              tickValues={ticks}
              tickFormat={(t: number) => (phone && t > 0 && t < maxX * 0.2 && ticks.length > 3 ? '' : `${t}`)}
              label="Stress hours (read points)"
              style={axisStyle}
            />
            <VictoryAxis
              dependentAxis
              crossAxis={false}
              label="hFE change from time zero, %"
              tickFormat={(t: number) => (t < 0 ? `−${Math.abs(t)}` : `${t}`)}
              style={{ ...axisStyle, axisLabel: { ...axisStyle.axisLabel, padding: 40 } }}
            />
            {shown.map((l, i) => {
              const s = seriesAt(i);
              const data = l.hfeTrend.map((p) => ({ x: p.hours, y: p.value }));
              return [
                <VictoryLine
                  key={`${l.lotId}-line`}
                  data={data}
                  style={{ data: { stroke: s.color, strokeWidth: 2.5, strokeDasharray: s.dash } }}
                />,
                <VictoryScatter
                  key={`${l.lotId}-pts`}
                  data={data}
                  size={phone ? 4 : 5}
                  symbol={s.symbol}
                  style={{ data: { fill: s.color, stroke: colors.surface, strokeWidth: 1 } }}
                />,
              ];
            })}
          </VictoryChart>
          <VictoryLegend
            standalone
            width={width}
            // One entry per row on a phone: "HG2612-C · Drifting" does not fit half a phone width.
            height={Math.ceil(shown.length / (phone ? 1 : 4)) * 26 + 34}
            itemsPerRow={phone ? 1 : 4}
            gutter={phone ? 12 : 24}
            orientation="horizontal"
            style={legendStyle}
            data={[
              ...shown.map((l, i) => ({
                name: `${l.lotCode} · ${LOT_VERDICT_LABEL[l.verdict]}`,
                symbol: { fill: seriesAt(i).color, type: seriesAt(i).symbol },
              })),
            ]}
          />
          <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs, paddingLeft: space.xs }}>
            <View style={{ width: 28, height: 0, borderTopWidth: 2, borderStyle: 'dashed', borderColor: LIMIT_STROKE }} />
            <Text variant="caption" tone="muted">
              Plan limit ±{limit} % (shaded: within the limit)
            </Text>
          </View>
        </>
      ) : null}
    </View>
  );
}
