import { useWindowDimensions } from 'react-native';

/** Named widths in px. Flags read "at least this wide": the side rail appears from `desktop`. */
export const widths = {
  tablet: 600,
  desktop: 1024,
  wide: 1440,
} as const;

export type BreakpointName = 'phone' | 'tablet' | 'desktop' | 'wide';

export interface Breakpoints {
  width: number;
  name: BreakpointName;
  /** ≥ 600 px: two-column forms, real tables. */
  gtPhone: boolean;
  /** ≥ 1024 px: side rail instead of bottom tabs. */
  gtTablet: boolean;
  /** ≥ 1440 px: roomier gutters. */
  gtDesktop: boolean;
}

export function getBreakpoints(width: number): Breakpoints {
  const w = Number.isFinite(width) && width > 0 ? width : 0;
  const gtPhone = w >= widths.tablet;
  const gtTablet = w >= widths.desktop;
  const gtDesktop = w >= widths.wide;
  const name: BreakpointName = gtDesktop ? 'wide' : gtTablet ? 'desktop' : gtPhone ? 'tablet' : 'phone';
  return { width: w, name, gtPhone, gtTablet, gtDesktop };
}

export function useBreakpoints(): Breakpoints {
  const { width } = useWindowDimensions();
  return getBreakpoints(width);
}
