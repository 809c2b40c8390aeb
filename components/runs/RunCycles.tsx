/**
 * A cycling run (intermittent operating life) counted in cycles: credited cycles against the
 * target, the next read point in cycles, the ΔTj band a cycle's swing must lie in, and per socket
 * the cycles credited and the junction swing the rig last reported (read from the device's
 * temperature-sensitive parameter). Rules: shared/scheduling/cycling.ts.
 */
import { View } from 'react-native';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { Card } from '@/components/ui/Card';
import { Fact } from '@/components/ui/Fact';
import { grouped } from '@/shared/domain/format';
import type { RunCycles, RunSocket } from '@/shared/schemas/runs';

const kelvin = (x: number) => `${+x.toFixed(1)} K`;

/** "104.2 K" or "101.0–104.2 K" (the smallest and largest swing since the rig's previous report). */
export function swingText(low: number | null, high: number | null): string {
  if (low === null || high === null) return '—';
  return Math.abs(high - low) < 0.05 ? kelvin(high) : `${+low.toFixed(1)}–${kelvin(high)}`;
}

/** A socket's cycles for the socket map: "1,204 · ΔTj 104.2 K" (plus what was not credited). */
export function socketCyclesText(s: RunSocket): string {
  if (!s.cycles) return '—';
  const missed = s.cycles.missed ? ` (${grouped(s.cycles.missed)} not credited)` : '';
  return `${grouped(s.cycles.done)} · ΔTj ${swingText(s.cycles.lastDTjLowC, s.cycles.lastDTjHighC)}${missed}`;
}

export function RunCyclesCard({ cycles, sockets }: { cycles: RunCycles; sockets: RunSocket[] }) {
  const frac = Math.max(0, Math.min(1, cycles.done / Math.max(cycles.target, 1)));
  const swings = sockets.filter((s) => s.cycles && s.cycles.lastDTjHighC !== null);
  const lastHigh = swings.length ? Math.max(...swings.map((s) => s.cycles!.lastDTjHighC!)) : null;
  const lastLow = swings.length ? Math.min(...swings.map((s) => s.cycles!.lastDTjLowC!)) : null;
  return (
    <Card
      title="Power cycles"
      description={`Power ${cycles.onMin} min on, ${cycles.offMin} min off. A cycle counts when its junction swing is ${kelvin(cycles.band.lowC)} to ${kelvin(cycles.band.highC)}; read points and the end are counted in cycles, not chamber hours.`}
    >
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <Fact label="Cycles" value={`${grouped(cycles.done)} / ${grouped(cycles.target)}`} testID="run-cycles" />
        <Fact
          label="Next read point"
          value={cycles.nextReadPointCycles === null ? 'None left' : `${grouped(cycles.nextReadPointCycles)} cycles`}
        />
        <Fact label="Last ΔTj (all sockets)" value={swingText(lastLow, lastHigh)} testID="run-last-swing" />
      </View>
      <View
        accessibilityRole="progressbar"
        accessibilityLabel={`${grouped(cycles.done)} of ${grouped(cycles.target)} cycles`}
        accessibilityValue={{ min: 0, max: 100, now: Math.round(frac * 100) }}
        style={{
          height: 14,
          borderRadius: radius.pill,
          backgroundColor: colors.surfaceSunken,
          borderWidth: 1,
          borderColor: colors.border,
          overflow: 'hidden',
        }}
      >
        <View style={{ width: `${frac * 100}%`, height: '100%', backgroundColor: tones.ok.edge }} />
      </View>
    </Card>
  );
}
