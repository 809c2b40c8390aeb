/**
 * Rigs × time: one row per rig, a bar per run (code and state in words), maintenance hatched, a
 * line at now. The rig names stay put; the time track scrolls sideways on a phone and fills the
 * width on a wide screen.
 */
import { formatDateTime } from '@/components/common/format';
import { formatLocalDate, formatLocalTime } from '@/shared/domain/format';
import { useRouter } from 'expo-router';
import { useState } from 'react';
import { Pressable, ScrollView, View, type LayoutChangeEvent } from 'react-native';
import Svg, { Defs, Line, Pattern, Rect } from 'react-native-svg';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { StatusShape } from '@/components/ui/StatusShape';
import { Text } from '@/components/ui/Text';
import type { Timeline as TimelineData, TimelineBar } from '@/shared/schemas/runs';
import { RUN_STATE_TONE, hours } from '@/components/runs/run-look';

const LABEL_W = 112;
const ROW_H = 56;
const AXIS_H = 28;

const STEPS_MS = [
  1,
  5,
  10,
  30,
  60,
  300,
  900,
  1800,
  3600,
  3 * 3600,
  6 * 3600,
  12 * 3600,
  86400,
  2 * 86400,
  7 * 86400,
  14 * 86400,
  28 * 86400,
].map((s) => s * 1000);

function tickLabel(ms: number, step: number): string {
  if (step < 60_000) return formatLocalTime(ms, true);
  // Hour steps name the day at midnight, so a scale that spans days still says which day.
  if (step < 86_400_000) return formatLocalTime(ms) === '00:00' ? formatLocalDate(ms) : formatLocalTime(ms);
  return formatLocalDate(ms);
}

function Hatch({ width, height, label }: { width: number; height: number; label: string }) {
  return (
    <View accessibilityRole="image" accessibilityLabel={label} style={{ width, height }}>
      <Svg width={width} height={height}>
        <Defs>
          <Pattern id="hatch" patternUnits="userSpaceOnUse" width={8} height={8} patternTransform="rotate(45)">
            <Line x1={0} y1={0} x2={0} y2={8} stroke={colors.inkSubtle} strokeWidth={2} />
          </Pattern>
        </Defs>
        <Rect x={0} y={0} width={width} height={height} fill={colors.surfaceSunken} />
        <Rect x={0} y={0} width={width} height={height} fill="url(#hatch)" opacity={0.45} />
      </Svg>
    </View>
  );
}

function Bar({ bar, left, width }: { bar: TimelineBar; left: number; width: number }) {
  const router = useRouter();
  const tone = tones[RUN_STATE_TONE[bar.state]];
  const booked = bar.state === 'booked';
  const label = `${bar.code}, ${bar.stateLabel}, ${hours(bar.stressHours)} of ${hours(bar.targetH)}, ${bar.sampleSize} devices at ${bar.chamberC} °C${bar.humidityPct !== null ? ` / ${bar.humidityPct} % RH` : ''}`;
  return (
    <Pressable
      accessibilityRole="link"
      accessibilityLabel={`Open run ${label}`}
      onPress={() => router.push(`/runs/${bar.runId}`)}
      style={({ pressed }) => ({
        position: 'absolute',
        left,
        top: 8,
        width,
        height: ROW_H - 16,
        borderRadius: radius.sm,
        backgroundColor: booked ? colors.surface : tone.bg,
        borderWidth: 1,
        borderStyle: booked ? 'dashed' : 'solid',
        borderColor: tone.edge,
        paddingHorizontal: 6,
        justifyContent: 'center',
        overflow: 'hidden',
        opacity: pressed ? 0.8 : 1,
      })}
    >
      {width > 36 ? (
        <View style={{ flexDirection: 'row', alignItems: 'center', gap: 4 }}>
          <StatusShape tone={RUN_STATE_TONE[bar.state]} size={10} />
          <Text variant="caption" numberOfLines={1} style={{ color: tone.fg, flexShrink: 1 }}>
            {bar.code} · {bar.stateLabel}
          </Text>
        </View>
      ) : null}
      {width > 120 ? (
        <Text variant="caption" tone="muted" numberOfLines={1}>
          {hours(bar.stressHours)} / {hours(bar.targetH)} · {bar.chamberC} °C
        </Text>
      ) : null}
    </Pressable>
  );
}

export function Timeline({ data }: { data: TimelineData }) {
  const { gtPhone } = useBreakpoints();
  const [avail, setAvail] = useState(0);
  const onLayout = (e: LayoutChangeEvent) => setAvail(Math.max(0, e.nativeEvent.layout.width - LABEL_W));
  const fromMs = Date.parse(data.from);
  const toMs = Date.parse(data.to);
  const nowMs = Date.parse(data.now);
  const span = Math.max(1, toMs - fromMs);
  const trackW = Math.max(avail, gtPhone ? 480 : Math.max(720, avail * 2.5));
  const x = (ms: number) => ((ms - fromMs) / span) * trackW;
  const step = STEPS_MS.find((s) => (s / span) * trackW >= 110) ?? STEPS_MS[STEPS_MS.length - 1];
  const ticks: number[] = [];
  for (let t = Math.ceil(fromMs / step) * step; t <= toMs; t += step) ticks.push(t);
  const height = data.rows.length * ROW_H;

  return (
    <View onLayout={onLayout} style={{ flexDirection: 'row' }} testID="schedule-timeline">
      <View style={{ width: LABEL_W }}>
        <View style={{ height: AXIS_H }} />
        {data.rows.map((r) => (
          <View
            key={r.rigId}
            style={{ height: ROW_H, justifyContent: 'center', paddingRight: space.xs, borderTopWidth: 1, borderColor: colors.border }}
          >
            <Text variant="label" numberOfLines={1}>
              {r.code}
            </Text>
            <Text variant="caption" tone={r.online ? 'muted' : 'subtle'} numberOfLines={1}>
              {r.active ? (r.online ? `${r.socketCount} sockets` : 'offline') : 'decommissioned'}
            </Text>
          </View>
        ))}
      </View>
      {avail > 0 ? (
        <ScrollView horizontal style={{ flex: 1 }} contentContainerStyle={{ width: trackW }} showsHorizontalScrollIndicator>
          <View style={{ width: trackW }}>
            <View style={{ height: AXIS_H, position: 'relative' }}>
              {ticks.map((t) => (
                <View
                  key={t}
                  style={{
                    position: 'absolute',
                    left: x(t),
                    top: 0,
                    height: AXIS_H,
                    borderLeftWidth: 1,
                    borderColor: colors.border,
                    paddingLeft: 4,
                  }}
                >
                  <Text variant="caption" tone="subtle" numberOfLines={1}>
                    {tickLabel(t, step)}
                  </Text>
                </View>
              ))}
            </View>
            <View style={{ height, position: 'relative' }}>
              {ticks.map((t) => (
                <View
                  key={t}
                  style={{ position: 'absolute', left: x(t), top: 0, height, borderLeftWidth: 1, borderColor: colors.border, opacity: 0.6 }}
                />
              ))}
              {data.rows.map((r, i) => (
                <View
                  key={r.rigId}
                  style={{
                    position: 'absolute',
                    top: i * ROW_H,
                    left: 0,
                    width: trackW,
                    height: ROW_H,
                    borderTopWidth: 1,
                    borderColor: colors.border,
                    backgroundColor: r.active ? undefined : colors.surfaceSunken,
                  }}
                >
                  {r.maintenance.map((m) => {
                    const l = Math.max(0, x(Date.parse(m.start)));
                    const w = Math.max(3, Math.min(trackW, x(Date.parse(m.end))) - l);
                    return (
                      <View key={m.id} style={{ position: 'absolute', left: l, top: 4, height: ROW_H - 8 }}>
                        <Hatch
                          width={w}
                          height={ROW_H - 8}
                          label={`${r.code} maintenance ${formatDateTime(m.start)} to ${formatDateTime(m.end)}${m.reason ? `: ${m.reason}` : ''}`}
                        />
                      </View>
                    );
                  })}
                  {r.bars.map((b) => {
                    const l = Math.max(0, x(Date.parse(b.start)));
                    const w = Math.max(6, Math.min(trackW, x(Date.parse(b.end))) - l);
                    return <Bar key={b.runId} bar={b} left={l} width={w} />;
                  })}
                </View>
              ))}
              {nowMs >= fromMs && nowMs <= toMs ? (
                <View
                  pointerEvents="none"
                  accessibilityRole="image"
                  accessibilityLabel="Now"
                  style={{
                    position: 'absolute',
                    left: x(nowMs) - 1,
                    top: -AXIS_H,
                    width: 2,
                    height: height + AXIS_H,
                    backgroundColor: colors.ember,
                  }}
                />
              ) : null}
            </View>
          </View>
        </ScrollView>
      ) : null}
    </View>
  );
}
