/**
 * Every chart of the app in one module, loaded only through LazyCharts' dynamic import: the web
 * export puts what two or more lazy chunks share into the eagerly loaded common chunk, so the charts
 * must share one chunk of their own for victory and d3 to stay out of sign-in and the floor.
 */
export { RigChart } from '@/components/floor/RigChart';
export { ChamberProfileChart } from '@/components/floor/ChamberProfileChart';
export { DriftTrendChart } from '@/components/trends/DriftTrendChart';
export { LotDistributionChart } from '@/components/trends/LotDistributionChart';
export { UtilisationChart } from '@/components/capacity/UtilisationChart';
