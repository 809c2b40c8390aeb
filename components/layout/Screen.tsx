import type { ReactNode } from 'react';
import { ScrollView, View, StyleSheet } from 'react-native';
import { useSafeAreaInsets } from 'react-native-safe-area-context';
import { colors, space } from '@/components/theme/tokens';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { Content, type ContentWidth } from './Content';

interface Props {
  children: ReactNode;
  /** Content cap on wide screens: narrow 560, regular 960 (default), wide 1240, full. */
  width?: ContentWidth;
  /** Set false for screens that manage their own scrolling (a long virtualised list). */
  scroll?: boolean;
  testID?: string;
}

/**
 * The frame every route renders: paper background, safe-area top inset, vertical rhythm,
 * and a centred, width-capped column. Screens never measure the window themselves.
 */
export function Screen({ children, width = 'regular', scroll = true, testID }: Props) {
  const insets = useSafeAreaInsets();
  const { gtTablet } = useBreakpoints();
  const padTop = insets.top + (gtTablet ? space.xl : space.lg);
  const padBottom = insets.bottom + space.xxl;
  const body = (
    <Content width={width} style={{ gap: space.lg }}>
      {children}
    </Content>
  );
  if (!scroll) {
    return (
      <View testID={testID} style={[styles.root, { paddingTop: padTop, paddingBottom: padBottom }]}>
        {body}
      </View>
    );
  }
  return (
    <ScrollView
      testID={testID}
      style={styles.root}
      contentContainerStyle={{ paddingTop: padTop, paddingBottom: padBottom, flexGrow: 1 }}
      keyboardShouldPersistTaps="handled"
    >
      {body}
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  root: { flex: 1, backgroundColor: colors.paper },
});
