import { Pressable, View } from 'react-native';
import Svg, { Defs, Line, Pattern, Rect } from 'react-native-svg';
import type { FloorSocket } from '@/shared/schemas/floor';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { StatusShape } from '@/components/ui/StatusShape';
import { Text } from '@/components/ui/Text';
import { bandFor, fmtC, TEMP_BANDS } from './temp-scale';

interface Props {
  sockets: FloorSocket[];
  selected: number | null;
  onSelect: (index: number) => void;
  /** Cell size in px (the board wraps to the available width). */
  cell?: number;
}

/** Diagonal hatching for tripped sockets: a pattern, not a colour, marks the trip. */
function Hatch({ size }: { size: number }) {
  return (
    <Svg width={size} height={size} style={{ position: 'absolute', top: 0, left: 0 }} pointerEvents="none" aria-hidden>
      <Defs>
        <Pattern id="trip-hatch" width={8} height={8} patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <Line x1={0} y1={0} x2={0} y2={8} stroke={tones.danger.fg} strokeWidth={3} />
        </Pattern>
      </Defs>
      <Rect x={0} y={0} width={size} height={size} fill="url(#trip-hatch)" opacity={0.35} />
    </Svg>
  );
}

export function socketSummary(s: FloorSocket): string {
  const parts = [`Socket ${s.index}`];
  if (s.serial) parts.push(s.serial);
  if (s.caseC === null) parts.push('no reading');
  else parts.push(`case ${fmtC(s.caseC)}`);
  if (s.tripped) parts.push('tripped');
  else if (s.caseC !== null) parts.push(s.biasOn ? 'bias on' : 'bias off');
  if (!s.serial) parts.push('no device loaded');
  return parts.join(', ');
}

/**
 * The board as a grid of sockets. Each cell: socket number, case temperature as a number, the
 * band colour behind it; tripped = hatched with an octagon and "TRIP"; no device = dashed outline;
 * bias off = hollow ring. Tap a cell for its readings.
 */
export function SocketBoard({ sockets, selected, onSelect, cell = 64 }: Props) {
  return (
    <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xxs }} testID="socket-board" role="group" aria-label="Sockets">
      {sockets.map((s) => {
        const band = bandFor(s.caseC);
        const empty = !s.serial && s.caseC === null;
        const isSel = selected === s.index;
        return (
          <Pressable
            key={s.index}
            onPress={() => onSelect(s.index)}
            accessibilityRole="button"
            accessibilityState={{ selected: isSel }}
            accessibilityLabel={socketSummary(s)}
            testID={`socket-${s.index}`}
            style={{
              width: cell,
              height: cell,
              borderRadius: radius.sm,
              overflow: 'hidden',
              backgroundColor: band?.fill ?? colors.surfaceSunken,
              borderWidth: isSel ? 3 : 1,
              borderStyle: empty ? 'dashed' : 'solid',
              borderColor: isSel ? colors.focus : s.tripped ? tones.danger.fg : colors.borderStrong,
              padding: 4,
              justifyContent: 'space-between',
            }}
          >
            {s.tripped ? <Hatch size={cell} /> : null}
            <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center' }}>
              <Text variant="caption" style={{ color: band?.ink ?? colors.inkMuted, fontSize: 11, lineHeight: 14 }}>
                {s.index}
              </Text>
              {s.tripped ? (
                <StatusShape tone="danger" size={12} />
              ) : s.caseC !== null && !s.biasOn ? (
                <StatusShape tone="idle" size={12} color={band?.ink} />
              ) : null}
            </View>
            <Text variant="label" style={{ color: band?.ink ?? colors.inkMuted, fontSize: 13, lineHeight: 16 }} numberOfLines={1}>
              {s.tripped ? 'TRIP' : s.caseC === null ? '—' : s.caseC.toFixed(0)}
            </Text>
          </Pressable>
        );
      })}
    </View>
  );
}

/** The legend: every band with its numbers, then the patterns. */
export function TempLegend() {
  return (
    <View
      style={{ gap: space.xs }}
      testID="temp-legend"
      accessibilityLabel={`Case temperature scale, °C: ${TEMP_BANDS.map((b) => b.label).join(', ')}`}
    >
      <Text variant="overline" tone="subtle">
        Case temperature, °C
      </Text>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xxs }}>
        {TEMP_BANDS.map((b) => (
          <View
            key={b.label}
            style={{
              backgroundColor: b.fill,
              paddingHorizontal: space.xs,
              paddingVertical: 4,
              borderRadius: radius.sm,
              borderWidth: 1,
              borderColor: colors.borderStrong,
            }}
          >
            <Text variant="caption" style={{ color: b.ink }}>
              {b.label}
            </Text>
          </View>
        ))}
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md, alignItems: 'center' }}>
        <View style={{ flexDirection: 'row', gap: 6, alignItems: 'center' }}>
          <StatusShape tone="danger" size={14} />
          <Text variant="caption">Hatched + “TRIP”: bias removed and latched</Text>
        </View>
        <View style={{ flexDirection: 'row', gap: 6, alignItems: 'center' }}>
          <StatusShape tone="idle" size={14} />
          <Text variant="caption">Ring: bias off</Text>
        </View>
        <View style={{ flexDirection: 'row', gap: 6, alignItems: 'center' }}>
          <View
            style={{ width: 16, height: 16, borderWidth: 1, borderStyle: 'dashed', borderColor: colors.borderStrong, borderRadius: 3 }}
          />
          <Text variant="caption">Dashed, “—”: empty socket, no reading</Text>
        </View>
      </View>
    </View>
  );
}
