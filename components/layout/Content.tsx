import type { ReactNode } from 'react';
import { View, type StyleProp, type ViewStyle } from 'react-native';
import { useBreakpoints, type Breakpoints } from '@/components/theme/breakpoints';
import { space } from '@/components/theme/tokens';

/** How wide a screen's content may grow before it is centred. */
export type ContentWidth = 'narrow' | 'regular' | 'wide' | 'full';

export const CONTENT_MAX: Record<ContentWidth, number | undefined> = {
  narrow: 560,
  regular: 960,
  wide: 1240,
  full: undefined,
};

export function gutterFor(bp: Breakpoints): number {
  if (bp.gtDesktop) return space.xxl;
  if (bp.gtTablet) return space.xl;
  if (bp.gtPhone) return space.lg;
  return space.md;
}

interface Props {
  children: ReactNode;
  width?: ContentWidth;
  style?: StyleProp<ViewStyle>;
}

/** Centres its children and caps their width; adds side gutters that grow with the window. */
export function Content({ children, width = 'regular', style }: Props) {
  const bp = useBreakpoints();
  const gutter = gutterFor(bp);
  return (
    <View
      style={[
        { width: '100%', maxWidth: CONTENT_MAX[width] !== undefined ? CONTENT_MAX[width]! + gutter * 2 : undefined },
        { alignSelf: 'center', paddingHorizontal: gutter },
        style,
      ]}
    >
      {children}
    </View>
  );
}

/** Lays children side by side from tablet width up, stacked on a phone. */
export function Columns({ children, gap = space.md, minPhone = false }: { children: ReactNode; gap?: number; minPhone?: boolean }) {
  const { gtPhone } = useBreakpoints();
  const row = gtPhone || minPhone;
  return (
    <View style={{ flexDirection: row ? 'row' : 'column', gap, alignItems: row ? 'flex-start' : 'stretch' }}>
      {Array.isArray(children)
        ? children.map((c, i) => (
            <View key={i} style={row ? { flex: 1, minWidth: 0 } : undefined}>
              {c}
            </View>
          ))
        : children}
    </View>
  );
}
