/**
 * A qualification cell's drift: the lot screen's spread chart (hFE change, ICBO ratio, VCE(sat)
 * shift against stress hours) drawn from the runs the cell's verdict judged, this lot's devices only.
 */
import { View } from 'react-native';
import { LotDistributionChart } from '@/components/charts/LazyCharts';
import { useCellDrift } from '@/components/queries/qualifications';
import { space } from '@/components/theme/tokens';
import { QueryState } from '@/components/ui/QueryState';
import { Text } from '@/components/ui/Text';

export function CellDrift({ qualificationId, cellId }: { qualificationId: string; cellId: string }) {
  const q = useCellDrift(qualificationId, cellId);
  return (
    <View style={{ gap: space.xs }} testID="qual-cell-drift">
      <QueryState query={q} loadingLabel="Reading the cell's drift…" errorTitle="Could not load the cell's drift">
        {(d) =>
          d.note && d.readPoints.length < 2 ? (
            <Text variant="caption" tone="muted" testID="qual-cell-drift-note">
              {d.note}
            </Text>
          ) : (
            <View style={{ gap: space.xs }}>
              <Text variant="caption" testID="qual-cell-drift-source">
                Lot {d.lotCode} on {d.runCodes.length === 1 ? 'run' : 'runs'} {d.runCodes.join(', ')}
                {d.planName ? ` (${d.planName})` : ''}: this lot&apos;s devices only.
              </Text>
              <LotDistributionChart lot={d} />
            </View>
          )
        }
      </QueryState>
    </View>
  );
}
