import { Fragment, useState, type ReactNode } from 'react';
import { View, type LayoutChangeEvent } from 'react-native';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors, radius, shadow, space } from '@/components/theme/tokens';
import { Text } from './Text';

export interface Column<T> {
  key: string;
  title: string;
  /** A string/number is wrapped in Text; return a node for pills, buttons, links. */
  render: (row: T) => ReactNode;
  /** Relative width in the table (default 1). */
  flex?: number;
  align?: 'left' | 'right';
  /**
   * How the column shows in a phone card: `title` (bold first line), `subtitle` (muted line
   * under it), `field` (label: value, the default), `actions` (a row at the bottom), `hidden`.
   */
  card?: 'title' | 'subtitle' | 'field' | 'actions' | 'hidden';
  /** The header names the column for screen readers only (e.g. "Actions" over a column of buttons). */
  titleHidden?: boolean;
}

/** Kept in the accessibility tree, out of sight (the usual visually-hidden pattern). */
const VISUALLY_HIDDEN = { position: 'absolute', width: 1, height: 1, margin: -1, overflow: 'hidden' } as const;

interface Props<T> {
  columns: Column<T>[];
  rows: readonly T[];
  rowKey: (row: T) => string;
  /** Names the table for screen readers ("People who can sign in"). */
  caption: string;
  /** Cards below this width: 'tablet' = on phones only (default), 'desktop' = also on tablets. */
  cardsBelow?: 'tablet' | 'desktop';
  /**
   * Cards also whenever the space the table gets is narrower than this (px): at 1024 px the side
   * rail leaves a nine-column table ~700 px, where its headers broke mid-word and pills were cut.
   */
  minTableWidth?: number;
  testID?: string;
}

const cell = (v: ReactNode, align?: 'left' | 'right', strong?: boolean) =>
  typeof v === 'string' || typeof v === 'number' ? (
    <Text variant={strong ? 'bodyStrong' : 'body'} align={align} numberOfLines={2}>
      {v}
    </Text>
  ) : (
    v
  );

/** A real table on wide screens; the same rows as stacked cards on a phone. */
export function DataTable<T>({ columns, rows, rowKey, caption, cardsBelow = 'tablet', minTableWidth = 0, testID }: Props<T>) {
  const bp = useBreakpoints();
  // The width this component is given (0 until measured), for minTableWidth.
  const [width, setWidth] = useState(0);
  const onLayout = (e: LayoutChangeEvent) => setWidth(Math.round(e.nativeEvent.layout.width));
  const tooNarrow = minTableWidth > 0 && width > 0 && width < minTableWidth;
  const asCards = (cardsBelow === 'desktop' ? !bp.gtTablet : !bp.gtPhone) || tooNarrow;

  if (asCards) {
    const title = columns.find((c) => c.card === 'title') ?? columns[0];
    const subtitle = columns.filter((c) => c.card === 'subtitle');
    const actions = columns.filter((c) => c.card === 'actions');
    const fields = columns.filter((c) => c !== title && !subtitle.includes(c) && !actions.includes(c) && c.card !== 'hidden');
    return (
      <View testID={testID} accessibilityRole="list" accessibilityLabel={caption} style={{ gap: space.sm }} onLayout={onLayout}>
        {rows.map((row) => (
          <View
            key={rowKey(row)}
            role="listitem"
            style={[
              {
                backgroundColor: colors.surface,
                borderRadius: radius.lg,
                borderWidth: 1,
                borderColor: colors.border,
                padding: space.md,
                gap: space.sm,
              },
              shadow,
            ]}
          >
            <View style={{ gap: 2 }}>
              {cell(title.render(row), undefined, true)}
              {subtitle.map((c) => (
                <Fragment key={c.key}>
                  {typeof c.render(row) === 'string' ? (
                    <Text variant="caption" tone="muted">
                      {c.render(row) as string}
                    </Text>
                  ) : (
                    c.render(row)
                  )}
                </Fragment>
              ))}
            </View>
            {fields.length ? (
              <View style={{ gap: space.xs }}>
                {fields.map((c) => (
                  <View key={c.key} style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
                    <Text variant="caption" tone="subtle" style={{ width: 104 }}>
                      {c.title}
                    </Text>
                    <View style={{ flex: 1, alignItems: 'flex-start' }}>{cell(c.render(row))}</View>
                  </View>
                ))}
              </View>
            ) : null}
            {actions.length ? (
              <View
                style={{
                  flexDirection: 'row',
                  flexWrap: 'wrap',
                  gap: space.xs,
                  borderTopWidth: 1,
                  borderTopColor: colors.border,
                  paddingTop: space.sm,
                }}
              >
                {actions.map((c) => (
                  <Fragment key={c.key}>{c.render(row)}</Fragment>
                ))}
              </View>
            ) : null}
          </View>
        ))}
      </View>
    );
  }

  return (
    <View
      testID={testID}
      role="table"
      aria-label={caption}
      onLayout={onLayout}
      style={[
        { backgroundColor: colors.surface, borderRadius: radius.lg, borderWidth: 1, borderColor: colors.border, overflow: 'hidden' },
        shadow,
      ]}
    >
      <View
        role="row"
        style={{
          flexDirection: 'row',
          backgroundColor: colors.surfaceSunken,
          borderBottomWidth: 1,
          borderBottomColor: colors.border,
          paddingHorizontal: space.md,
        }}
      >
        {columns.map((c) => (
          <View key={c.key} role="columnheader" style={{ flex: c.flex ?? 1, paddingVertical: space.sm, paddingHorizontal: space.xs }}>
            <Text variant="overline" tone="muted" align={c.align} style={c.titleHidden ? VISUALLY_HIDDEN : undefined}>
              {c.title}
            </Text>
          </View>
        ))}
      </View>
      {rows.map((row, i) => (
        <View
          key={rowKey(row)}
          role="row"
          style={{
            flexDirection: 'row',
            alignItems: 'center',
            paddingHorizontal: space.md,
            minHeight: 56,
            borderTopWidth: i === 0 ? 0 : 1,
            borderTopColor: colors.border,
          }}
        >
          {columns.map((c, ci) => (
            <View
              key={c.key}
              role="cell"
              style={{
                flex: c.flex ?? 1,
                paddingVertical: space.sm,
                paddingHorizontal: space.xs,
                alignItems: c.align === 'right' ? 'flex-end' : 'flex-start',
                minWidth: 0,
              }}
            >
              {cell(c.render(row), c.align, ci === 0)}
            </View>
          ))}
        </View>
      ))}
    </View>
  );
}
