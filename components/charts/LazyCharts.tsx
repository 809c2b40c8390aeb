/**
 * The charts, loaded on demand: victory, react-native-svg's chart parts, d3 and lodash are most of
 * the app's JavaScript, and only the rig, trends and lot screens draw a chart. Each chart is its own
 * chunk of the web export (one dynamic `import()`), so sign-in and the floor never download it.
 */
import { lazy, Suspense, type ComponentProps } from 'react';
import { Loading } from '@/components/ui/Loading';
import type { RigChart as RigChartImpl } from '@/components/floor/RigChart';
import type { ChamberProfileChart as ChamberProfileChartImpl } from '@/components/floor/ChamberProfileChart';
import type { DriftTrendChart as DriftTrendChartImpl } from '@/components/trends/DriftTrendChart';
import type { LotDistributionChart as LotDistributionChartImpl } from '@/components/trends/LotDistributionChart';
import type { UtilisationChart as UtilisationChartImpl } from '@/components/capacity/UtilisationChart';

// One chunk for all charts (see chart-kit.ts); React.lazy caches the promise per component.
const kit = () => import('./chart-kit');
const LazyRig = lazy(() => kit().then((m) => ({ default: m.RigChart })));
const LazyChamber = lazy(() => kit().then((m) => ({ default: m.ChamberProfileChart })));
const LazyDrift = lazy(() => kit().then((m) => ({ default: m.DriftTrendChart })));
const LazyDistribution = lazy(() => kit().then((m) => ({ default: m.LotDistributionChart })));
const LazyUtilisation = lazy(() => kit().then((m) => ({ default: m.UtilisationChart })));

const fallback = <Loading label="Loading the chart…" variant="spinner" testID="chart-loading" />;

export function RigChart(props: ComponentProps<typeof RigChartImpl>) {
  return (
    <Suspense fallback={fallback}>
      <LazyRig {...props} />
    </Suspense>
  );
}

export function DriftTrendChart(props: ComponentProps<typeof DriftTrendChartImpl>) {
  return (
    <Suspense fallback={fallback}>
      <LazyDrift {...props} />
    </Suspense>
  );
}

export function LotDistributionChart(props: ComponentProps<typeof LotDistributionChartImpl>) {
  return (
    <Suspense fallback={fallback}>
      <LazyDistribution {...props} />
    </Suspense>
  );
}

export function UtilisationChart(props: ComponentProps<typeof UtilisationChartImpl>) {
  return (
    <Suspense fallback={fallback}>
      <LazyUtilisation {...props} />
    </Suspense>
  );
}

export function ChamberProfileChart(props: ComponentProps<typeof ChamberProfileChartImpl>) {
  return (
    <Suspense fallback={fallback}>
      <LazyChamber {...props} />
    </Suspense>
  );
}
