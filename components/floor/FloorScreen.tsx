import { View } from 'react-native';
import type { FloorTile } from '@/shared/schemas/floor';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useFloor, useFloorStream } from '@/components/queries/floor';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { space } from '@/components/theme/tokens';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { Text } from '@/components/ui/Text';
import { LiveIndicator } from './LiveIndicator';
import { RigTile } from './RigTile';
import { countOf } from '@/shared/domain/format';

function summary(tiles: FloorTile[]): string {
  const online = tiles.filter((t) => t.online).length;
  const running = tiles.filter((t) => t.run).length;
  const alarms = tiles.reduce((n, t) => n + t.openAlarms, 0);
  return `${online} of ${countOf(tiles.length, 'rig')} online · ${running} running · ${countOf(alarms, 'open alarm')}`;
}

/** Operator home: every rig as a tile, updated live. Phone: one column; wider: a grid. */
export function FloorScreen() {
  const floor = useFloor();
  const stream = useFloorStream();
  const { width, gtPhone, gtTablet } = useBreakpoints();
  const columns = gtTablet ? (width >= 1440 ? 4 : 3) : gtPhone ? 2 : 1;
  return (
    <Screen width="wide" testID="floor-screen">
      <Header
        eyebrow="Burn-in floor"
        title="Floor"
        subtitle="Every oven and rig in the lab, live: chamber against setpoint, sockets, alarms and the next read point."
        actions={<LiveIndicator state={stream} />}
      />
      <QueryState
        query={floor}
        loadingLabel="Loading the floor…"
        errorTitle="Could not load the floor"
        isEmpty={(tiles) => tiles.length === 0}
        empty={
          <EmptyState
            title="No rigs registered yet"
            message="An administrator registers each rig under Rigs; it appears here as soon as it exists."
          />
        }
      >
        {(tiles) => (
          <View style={{ gap: space.md }}>
            <Text variant="label" tone="muted" testID="floor-summary">
              {summary(tiles)}
            </Text>
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', marginHorizontal: -space.xs }} testID="floor-grid">
              {tiles.map((t) => (
                <View key={t.rigId} style={{ width: `${100 / columns}%`, padding: space.xs }}>
                  <RigTile tile={t} />
                </View>
              ))}
            </View>
          </View>
        )}
      </QueryState>
      <SafetyCaution
        compact
        context="Ovens run hot and boards carry bias voltage; cycling chambers have hot and frozen surfaces and an autoclave is a pressure vessel under steam. A software alarm is no substitute for a chamber's own protection; open a chamber only when your procedure says it is safe."
      />
    </Screen>
  );
}
