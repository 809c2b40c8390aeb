import { Link } from 'expo-router';
import { Pressable, View } from 'react-native';
import type { FloorChamber, FloorTile } from '@/shared/schemas/floor';
import { grouped } from '@/shared/domain/format';
import { chamberAirText, chamberLoadText, chamberStepText, chamberTileLabel } from './chamber-words';
import { colors, radius, space, type Tone } from '@/components/theme/tokens';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { fmtHours, rigState } from './rig-state';
import { fmtC } from './temp-scale';

function Stat({ label, value, tone }: { label: string; value: string; tone?: Tone }) {
  return (
    <View style={{ minWidth: 64, gap: 2 }}>
      <Text variant="overline" tone="subtle">
        {label}
      </Text>
      <Text variant="bodyStrong" tone={tone ?? 'default'}>
        {value}
      </Text>
    </View>
  );
}

/** A chamber's tile body: load and air, the programme's step (cycle n of N), devices, excursion alarms. */
function ChamberBody({ tile, chamber }: { tile: FloorTile; chamber: FloorChamber }) {
  return (
    <>
      <View>
        <Text variant="overline" tone="subtle">
          Load
        </Text>
        <Text variant="title" testID={`chamber-load-${tile.code}`}>
          {chamberLoadText(chamber)}
        </Text>
        <Text variant="caption" tone="muted">
          {chamberAirText(chamber)}
        </Text>
      </View>
      <Text variant="label" testID={`chamber-step-${tile.code}`}>
        {chamberStepText(chamber, tile.run?.state ?? null)}
      </Text>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <Stat label="Devices" value={grouped(chamber.loaded)} />
        <Stat label="Excursions" value={String(chamber.excursionAlarms)} tone={chamber.excursionAlarms ? 'danger' : undefined} />
        <Stat label="Alarms" value={String(tile.openAlarms)} tone={tile.openAlarms ? 'attention' : undefined} />
      </View>
      <Text variant="caption" tone="muted">
        {tile.run ? `Run ${tile.run.code} · ${fmtHours(tile.run.stressHours)} stressed` : 'No run in this chamber'}
      </Text>
    </>
  );
}

/** "Thermal path degrading: socket 2" (empty without flags). */
export function thermalFlagText(sockets: readonly number[]): string {
  if (!sockets.length) return '';
  return `Thermal path degrading: socket${sockets.length > 1 ? 's' : ''} ${sockets.join(', ')}`;
}

export function RigTile({ tile }: { tile: FloorTile }) {
  const s = rigState(tile);
  const off = tile.chamberC !== null && tile.setpointC !== null ? tile.chamberC - tile.setpointC : null;
  const chamberText = `${fmtC(tile.chamberC)}${tile.setpointC !== null ? ` / set ${fmtC(tile.setpointC, 0)}` : ''}`;
  const next =
    tile.run?.hoursToNextReadPoint !== null && tile.run?.hoursToNextReadPoint !== undefined
      ? `${fmtHours(tile.run.hoursToNextReadPoint)} of stress to ${tile.run.nextReadPointH} h`
      : null;
  const label = [
    `Rig ${tile.code}, ${s.label}`,
    `chamber ${chamberText}`,
    `${tile.powered} powered, ${tile.tripped} tripped, ${tile.empty} empty sockets`,
    `${tile.openAlarms} open alarms`,
    thermalFlagText(tile.thermalFlags),
    tile.run ? `run ${tile.run.code}` : 'no run',
    next ? `next read point in ${next}` : '',
  ]
    .filter(Boolean)
    .join('; ');
  const chamber = tile.chamber;
  return (
    <Link href={{ pathname: '/floor/[code]', params: { code: tile.code } }} asChild>
      <Pressable
        accessibilityRole="link"
        accessibilityLabel={chamber ? chamberTileLabel({ ...tile, chamber }, s.label) : label}
        testID={`rig-tile-${tile.code}`}
        style={({ pressed }) => ({
          flex: 1,
          backgroundColor: pressed ? colors.surfaceSunken : colors.surface,
          borderRadius: radius.lg,
          borderWidth: 1,
          borderColor: tile.online ? colors.border : colors.borderStrong,
          padding: space.md,
          gap: space.sm,
        })}
      >
        <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'flex-start', gap: space.xs }}>
          <View style={{ flexShrink: 1 }}>
            <Text variant="heading">{tile.code}</Text>
            <Text variant="caption" tone="muted" numberOfLines={1}>
              {tile.name}
              {tile.location ? ` · ${tile.location}` : ''}
            </Text>
          </View>
          <StatusPill tone={s.tone} label={s.label} size="sm" />
        </View>
        {chamber ? <ChamberBody tile={tile} chamber={chamber} /> : null}
        {chamber ? null : (
          <>
            <View>
              <Text variant="overline" tone="subtle">
                Chamber
              </Text>
              <Text variant="title">{fmtC(tile.chamberC)}</Text>
              <Text variant="caption" tone={off !== null && Math.abs(off) > 3 ? 'attention' : 'muted'}>
                {tile.setpointC !== null
                  ? `Setpoint ${fmtC(tile.setpointC, 0)}${off !== null ? ` (${off >= 0 ? '+' : '−'}${Math.abs(off).toFixed(1)} °C)` : ''}`
                  : 'No setpoint reported'}
                {tile.humidityPct !== null ? ` · ${tile.humidityPct.toFixed(0)} % RH` : ''}
              </Text>
            </View>
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
              <Stat label="Powered" value={String(tile.powered)} />
              <Stat label="Tripped" value={String(tile.tripped)} tone={tile.tripped ? 'danger' : undefined} />
              <Stat label="Empty" value={String(tile.empty)} />
              <Stat label="Alarms" value={String(tile.openAlarms)} tone={tile.openAlarms ? 'attention' : undefined} />
            </View>
            {tile.thermalFlags.length ? (
              <Text variant="caption" tone="attention" testID={`rig-tile-thermal-${tile.code}`}>
                {thermalFlagText(tile.thermalFlags)}
              </Text>
            ) : null}
            <Text variant="caption" tone="muted">
              {tile.run
                ? `Run ${tile.run.code} · ${fmtHours(tile.run.stressHours)} stressed${next ? ` · next read point: ${next}` : ''}`
                : 'No run on this rig'}
            </Text>
          </>
        )}
      </Pressable>
    </Link>
  );
}
