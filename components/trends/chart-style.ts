import { colors, fonts } from '@/components/theme/tokens';

/** Lines differ by colour, marker shape and dash, so a lot can be told apart without colour. */
export const SERIES = [
  { color: '#1E4F86', symbol: 'circle', dash: undefined },
  { color: '#B0411A', symbol: 'square', dash: '6,3' },
  { color: '#1F6B3F', symbol: 'triangleUp', dash: '2,3' },
  { color: '#6B3FA0', symbol: 'diamond', dash: '8,3,2,3' },
  { color: '#7A4F00', symbol: 'star', dash: undefined },
  { color: '#2E2B27', symbol: 'triangleDown', dash: '4,4' },
  { color: '#0F6E77', symbol: 'plus', dash: '10,4' },
  { color: '#A3211B', symbol: 'minus', dash: '1,3' },
] as const;

export const seriesAt = (i: number) => SERIES[i % SERIES.length];

const font = `${fonts.regular}, system-ui, sans-serif`;

export const axisStyle = {
  axis: { stroke: colors.borderStrong },
  grid: { stroke: colors.border, strokeDasharray: '2,4' },
  tickLabels: { fontSize: 12, fill: colors.inkMuted, fontFamily: font, padding: 4 },
  axisLabel: { fontSize: 12, fill: colors.ink, fontFamily: font, padding: 32 },
  ticks: { stroke: colors.borderStrong, size: 4 },
};

export const legendStyle = {
  labels: { fontSize: 12, fill: colors.ink, fontFamily: font },
};

export const LIMIT_FILL = '#FCEFCB';
export const LIMIT_STROKE = '#A3211B';
