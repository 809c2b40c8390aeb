/**
 * Rigs × time: one row per rig, a bar per run (code, state, priority and lateness in words), each
 * run's due date as a diamond on its row, maintenance hatched, a line at now. The scale is a zoom
 * level in clock hours per 100 px (timeline-scale.ts): the same on every visit (remembered per
 * user), zoomed and panned with buttons (keyboard), by dragging the track and by pinching on a
 * touch screen. The time labels sit inside the visible window, so a phone always shows them.
 */
import { formatDateTime } from '@/components/common/format';
import { useRouter } from 'expo-router';
import { useState } from 'react';
import { Pressable, View, type LayoutChangeEvent } from 'react-native';
import { useTrackGestures } from './use-track-gestures';
import { Button } from '@/components/ui/Button';
import { PRIORITY_LABEL, isPriority } from '@/shared/domain/priority';
import {
  ZOOM_LEVELS_H,
  latenessWords,
  panStepH,
  readZoom,
  relativeLabel,
  saveZoom,
  ticks as makeTicks,
  visibleWindow,
  zoomIndex,
} from './timeline-scale';
import Svg, { Defs, Line, Pattern, Rect } from 'react-native-svg';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { StatusShape } from '@/components/ui/StatusShape';
import { Text } from '@/components/ui/Text';
import type { Timeline as TimelineData, TimelineBar } from '@/shared/schemas/runs';
import { RUN_STATE_TONE, hours } from '@/components/runs/run-look';

const LABEL_W = 112;
const ROW_H = 56;
const AXIS_H = 28;

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

const priorityWords = (p: number) => (isPriority(p) ? PRIORITY_LABEL[p] : 'Normal');

/** "due 12-20 17:00, late by 6.3 d" / "no due date" for a bar's label. */
function dueWords(bar: TimelineBar): string {
  if (!bar.dueAt) return 'no due date';
  return `due ${formatDateTime(bar.dueAt)}, ${latenessWords(bar.lateH).toLowerCase()}`;
}

function Bar({ bar, left, width }: { bar: TimelineBar; left: number; width: number }) {
  const router = useRouter();
  const tone = tones[RUN_STATE_TONE[bar.state]];
  const booked = bar.state === 'booked';
  const late = (bar.lateH ?? 0) > 0;
  const label = `${bar.code}, ${bar.stateLabel}, priority ${priorityWords(bar.priority)}, ${dueWords(bar)}, ${hours(bar.stressHours)} of ${hours(bar.targetH)}, ${bar.sampleSize} devices at ${bar.chamberC} °C${bar.humidityPct !== null ? ` / ${bar.humidityPct} % RH` : ''}`;
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
        // A late run: a thick end cap in the danger colour besides the words "Late by …".
        borderRightWidth: late ? 6 : 1,
        borderRightColor: late ? tones.danger.fg : tone.edge,
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
      {width > 90 ? (
        <View style={{ flexDirection: 'row', alignItems: 'center', gap: 4 }}>
          {late ? <StatusShape tone="danger" size={10} /> : null}
          <Text variant="caption" tone={late ? 'danger' : 'muted'} numberOfLines={1} style={{ flexShrink: 1 }}>
            {late ? `${latenessWords(bar.lateH)} · ` : ''}
            {priorityWords(bar.priority)} · {hours(bar.stressHours)} / {hours(bar.targetH)}
          </Text>
        </View>
      ) : null}
    </Pressable>
  );
}

/** A due date on its run's row: a diamond and a thin line (the words are in the bar and the list). */
function DueMark({ left }: { left: number }) {
  return (
    <View pointerEvents="none" style={{ position: 'absolute', left: left - 5, top: 0, width: 10, height: ROW_H, alignItems: 'center' }}>
      <View style={{ width: 8, height: 8, marginTop: 1, transform: [{ rotate: '45deg' }], backgroundColor: colors.ink }} />
      <View style={{ width: 2, flex: 1, backgroundColor: colors.ink, opacity: 0.7 }} />
    </View>
  );
}

const scaleWords = (h: number) => `${h >= 24 ? `${+(h / 24).toFixed(1)} ${h === 24 ? 'day' : 'days'}` : `${h} hours`} per 100 px`;

export function Timeline({ data, userId }: { data: TimelineData; userId?: string }) {
  const [avail, setAvail] = useState(0);
  const [zoomH, setZoomH] = useState(() => readZoom(userId));
  const [panH, setPanH] = useState(0);
  const [dragPx, setDragPx] = useState(0);
  const onLayout = (e: LayoutChangeEvent) => setAvail(Math.max(0, e.nativeEvent.layout.width - LABEL_W));
  const nowMs = Date.parse(data.now);
  const trackW = Math.max(1, avail);
  const w = visibleWindow(nowMs, data.msPerClockH, trackW, zoomH, panH);
  const fromMs = w.fromMs - dragPx * w.msPerPx;
  const toMs = fromMs + trackW * w.msPerPx;
  const x = (ms: number) => (ms - fromMs) / w.msPerPx;
  const { ticks } = makeTicks({ fromMs, toMs, msPerPx: w.msPerPx }, nowMs, data.msPerClockH);
  const height = data.rows.length * ROW_H;
  const zi = zoomIndex(zoomH);
  const zoomTo = (k: number) => {
    const h = ZOOM_LEVELS_H[Math.max(0, Math.min(ZOOM_LEVELS_H.length - 1, k))];
    setZoomH(h);
    saveZoom(userId, h);
  };
  const [trackNode, setTrackNode] = useState<unknown>(null);
  const msPerH = w.msPerPx > 0 ? data.msPerClockH / w.msPerPx : 1;
  useTrackGestures(trackNode, {
    onDrag: setDragPx,
    onDragEnd: (dx) => {
      setDragPx(0);
      setPanH((p) => p - Math.round(dx / msPerH));
    },
    onPinch: (k) => zoomTo(zi + k),
  });
  const step = panStepH(trackW, zoomH);

  return (
    <View style={{ gap: space.xs }}>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' }} testID="schedule-controls">
        <Button size="sm" variant="secondary" label="Zoom in" disabled={zi === 0} onPress={() => zoomTo(zi - 1)} />
        <Button size="sm" variant="secondary" label="Zoom out" disabled={zi === ZOOM_LEVELS_H.length - 1} onPress={() => zoomTo(zi + 1)} />
        <Button
          size="sm"
          variant="secondary"
          label="Earlier"
          accessibilityLabel={`Earlier by ${relativeLabel(step).slice(1)}`}
          onPress={() => setPanH((p) => p - step)}
        />
        <Button
          size="sm"
          variant="secondary"
          label="Now"
          accessibilityLabel="Back to now"
          disabled={panH === 0}
          onPress={() => setPanH(0)}
        />
        <Button
          size="sm"
          variant="secondary"
          label="Later"
          accessibilityLabel={`Later by ${relativeLabel(step).slice(1)}`}
          onPress={() => setPanH((p) => p + step)}
        />
        <Text variant="caption" tone="muted" testID="schedule-scale">
          Scale: {scaleWords(zoomH)}
        </Text>
      </View>
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
          <View ref={setTrackNode} style={{ width: trackW, overflow: 'hidden' }} testID="schedule-track">
            <View style={{ height: AXIS_H, position: 'relative' }} testID="schedule-axis">
              {ticks.map((t) => (
                <View
                  key={t.ms}
                  style={{
                    position: 'absolute',
                    left: x(t.ms),
                    top: 0,
                    height: AXIS_H,
                    borderLeftWidth: 1,
                    borderColor: colors.border,
                    paddingLeft: 4,
                  }}
                >
                  <Text variant="caption" tone="muted" numberOfLines={1}>
                    {t.label}
                  </Text>
                </View>
              ))}
            </View>
            <View style={{ height, position: 'relative' }}>
              {ticks.map((t) => (
                <View
                  key={t.ms}
                  style={{
                    position: 'absolute',
                    left: x(t.ms),
                    top: 0,
                    height,
                    borderLeftWidth: 1,
                    borderColor: colors.border,
                    opacity: 0.6,
                  }}
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
                  {r.maintenance
                    .filter((m) => Date.parse(m.end) > fromMs && Date.parse(m.start) < toMs)
                    .map((m) => {
                      const l = Math.max(0, x(Date.parse(m.start)));
                      const wd = Math.max(3, Math.min(trackW, x(Date.parse(m.end))) - l);
                      return (
                        <View key={m.id} style={{ position: 'absolute', left: l, top: 4, height: ROW_H - 8 }}>
                          <Hatch
                            width={wd}
                            height={ROW_H - 8}
                            label={`${r.code} maintenance ${formatDateTime(m.start)} to ${formatDateTime(m.end)}${m.reason ? `: ${m.reason}` : ''}`}
                          />
                        </View>
                      );
                    })}
                  {r.bars
                    .filter((b) => Date.parse(b.end) > fromMs && Date.parse(b.start) < toMs)
                    .map((b) => {
                      const l = Math.max(0, x(Date.parse(b.start)));
                      const wd = Math.max(6, Math.min(trackW, x(Date.parse(b.end))) - l);
                      return <Bar key={b.runId} bar={b} left={l} width={wd} />;
                    })}
                  {r.bars
                    .filter((b) => b.dueAt && Date.parse(b.dueAt) >= fromMs && Date.parse(b.dueAt) <= toMs)
                    .map((b) => (
                      <DueMark key={`due-${b.runId}`} left={x(Date.parse(b.dueAt!))} />
                    ))}
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
        ) : null}
      </View>
    </View>
  );
}
