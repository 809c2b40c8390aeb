import { useState } from 'react';
import { View } from 'react-native';
import { VictoryArea, VictoryAxis, VictoryChart, VictoryLegend, VictoryLine, VictoryScatter } from 'victory-native';
import type { LotDetail } from '@/shared/schemas/analytics';
import { colors, space } from '@/components/theme/tokens';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { axisStyle, legendStyle, LIMIT_STROKE } from './chart-style';
import { hours, sig } from './format';
import { domainWithZero, endPadding } from '@/components/charts/axis';

type Param = 'hfe' | 'icbo' | 'vcesat';
const PARAMS = [
  { value: 'hfe', label: 'hFE change %' },
  { value: 'icbo', label: 'ICBO ratio' },
  { value: 'vcesat', label: 'VCE(sat) shift mV' },
] as const;

const BAND_OUTER = '#C9D8EA';
const BAND_INNER = '#8FB0D6';
const CENTRE = '#1E4F86';
const FIT = '#6B3FA0';

/** What the chart reads: a lot view (the lot screen) or a qualification cell's drift (its runs only). */
export type DistributionSource = Pick<LotDetail, 'lotCode' | 'readPoints' | 'trends' | 'criteria' | 'readPointsH'> & {
  plan: { durationH: number } | null;
};

/** The lot's spread at each read point (5–95 % and 25–75 % bands, median), its limit and fitted trend. */
export function LotDistributionChart({ lot }: { lot: DistributionSource }) {
  const [param, setParam] = useState<Param>('hfe');
  const [width, setWidth] = useState(0);
  const phone = width > 0 && width < 600;
  const key = param === 'hfe' ? 'hfeChangePct' : param === 'icbo' ? 'icboRatio' : 'vcesatShiftMv';
  const zero = param === 'icbo' ? 1 : 0;
  const points = lot.readPoints
    .map((r) => ({ h: r.hours, s: r.hours === 0 ? null : r[key] }))
    .filter((p) => p.h === 0 || p.s)
    .map((p) =>
      p.s
        ? { x: p.h, p5: p.s.p5, p25: p.s.p25, median: p.s.median, p75: p.s.p75, p95: p.s.p95 }
        : { x: p.h, p5: zero, p25: zero, median: zero, p75: zero, p95: zero },
    );
  const trend = lot.trends.find((t) => t.parameter === param);
  const c = lot.criteria;
  const limits: number[] =
    param === 'hfe' && c
      ? [c.hfeChangePct, -c.hfeChangePct]
      : param === 'vcesat' && c
        ? [c.vcesatShiftV * 1000, -c.vcesatShiftV * 1000]
        : trend && param === 'icbo' && trend.limit > 1
          ? [trend.limit]
          : [];
  const maxX = Math.max(lot.plan?.durationH ?? 0, ...points.map((p) => p.x), 1);
  const fitLine = trend ? trend.line.filter((p) => p.hours <= maxX).map((p) => ({ x: p.hours, y: p.value })) : [];
  const ys = [...points.flatMap((p) => [p.p5, p.p95]), ...limits, ...fitLine.map((p) => p.y)];
  // Every parameter here is read from zero: a drift (hFE %, VCE(sat) mV) or a ratio (ICBO / initial, never negative).
  const domainY = domainWithZero(ys, { floorAtZero: param === 'icbo' });
  const ticks = [...new Set([...(lot.readPointsH ?? []), ...points.map((p) => p.x)])].sort((a, b) => a - b);
  const unit = param === 'hfe' ? '%' : param === 'icbo' ? '×' : 'mV';
  const label =
    `${PARAMS.find((p) => p.value === param)!.label} of lot ${lot.lotCode}: ` +
    points.map((p) => `${p.x} h median ${sig(p.median)} ${unit} (5–95 % ${sig(p.p5)} to ${sig(p.p95)})`).join('; ') +
    (trend?.pseudoFailureH ? `. Fitted path reaches the limit at ${hours(trend.pseudoFailureH)}.` : '.');

  return (
    <View style={{ gap: space.sm }}>
      <SegmentedChoice label="Parameter" options={PARAMS} value={param} onChange={(v) => setParam(v as Param)} testID="lot-chart-param" />
      <View
        testID="lot-chart"
        onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))}
        accessible
        accessibilityRole="image"
        accessibilityLabel={label}
      >
        {points.length < 2 ? (
          <Text tone="muted">No readings after time zero yet.</Text>
        ) : width > 0 ? (
          <>
            <VictoryChart
              width={width}
              height={phone ? 260 : 320}
              padding={{ top: 16, bottom: 48, left: 60, right: endPadding(String(ticks[ticks.length - 1] ?? maxX), phone ? 12 : 24) }}
              domain={{ x: [0, maxX], y: domainY }}
            >
              <VictoryArea
                data={points.map((p) => ({ x: p.x, y: p.p95, y0: p.p5 }))}
                style={{ data: { fill: BAND_OUTER, opacity: 0.7 } }}
              />
              <VictoryArea
                data={points.map((p) => ({ x: p.x, y: p.p75, y0: p.p25 }))}
                style={{ data: { fill: BAND_INNER, opacity: 0.7 } }}
              />
              {limits.map((y) => (
                <VictoryLine
                  key={y}
                  data={[
                    { x: 0, y },
                    { x: maxX, y },
                  ]}
                  style={{ data: { stroke: LIMIT_STROKE, strokeWidth: 1.5, strokeDasharray: '6,4' } }}
                />
              ))}
              {fitLine.length ? (
                <VictoryLine data={fitLine} style={{ data: { stroke: FIT, strokeWidth: 2, strokeDasharray: '2,3' } }} />
              ) : null}
              <VictoryLine data={points.map((p) => ({ x: p.x, y: p.median }))} style={{ data: { stroke: CENTRE, strokeWidth: 2.5 } }} />
              <VictoryScatter
                data={points.map((p) => ({ x: p.x, y: p.median }))}
                size={5}
                symbol="circle"
                style={{ data: { fill: CENTRE, stroke: colors.surface, strokeWidth: 1 } }}
              />
              <VictoryAxis offsetY={48} tickValues={ticks} label="Stress hours (read points)" style={axisStyle} />
              <VictoryAxis
                dependentAxis
                crossAxis={false}
                label={PARAMS.find((p) => p.value === param)!.label}
                tickFormat={(t: number) => (t < 0 ? `−${Math.abs(t)}` : `${t}`)}
                style={{ ...axisStyle, axisLabel: { ...axisStyle.axisLabel, padding: 44 } }}
              />
            </VictoryChart>
            <VictoryLegend
              standalone
              width={width}
              height={phone ? 86 : 40}
              itemsPerRow={phone ? 2 : 4}
              orientation="horizontal"
              gutter={16}
              style={legendStyle}
              data={[
                { name: 'Median', symbol: { fill: CENTRE, type: 'circle' } },
                { name: '25–75 % of devices', symbol: { fill: BAND_INNER, type: 'square' } },
                { name: '5–95 % of devices', symbol: { fill: BAND_OUTER, type: 'square' } },
                { name: 'Fitted path (dotted)', symbol: { fill: FIT, type: 'minus' } },
              ]}
            />
            <Text variant="caption" tone="muted">
              Red dashed line: the plan's limit
              {param === 'icbo' ? ' for the lot’s typical device (ratio allowed at its median time-zero leakage)' : ''}.
              {trend?.pseudoFailureH
                ? ` The fitted path reaches it at ${hours(trend.pseudoFailureH)}.`
                : ' The fitted path does not reach it.'}
            </Text>
          </>
        ) : null}
      </View>
    </View>
  );
}
