/**
 * DataTable (components/ui/DataTable.tsx): a table from the desktop breakpoint, cards below it —
 * and cards whenever the space it is given is narrower than `minTableWidth` (at 1024 px the side
 * rail leaves the nine-column plans table ~700 px, where its headers broke mid-word).
 */
import { act, fireEvent, screen } from '@testing-library/react-native';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { renderWithClient, setWidth } from './support/render';

interface Row {
  id: string;
  name: string;
  kind: string;
}
const columns: Column<Row>[] = [
  { key: 'name', title: 'Plan', card: 'title', render: (r) => r.name },
  { key: 'kind', title: 'Stress', render: (r) => r.kind },
];
const rows: Row[] = [
  { id: 'a', name: 'HTRB 145 °C', kind: 'HTRB' },
  { id: 'b', name: 'Intermittent operating life', kind: 'Intermittent life' },
];

const layout = (width: number) => ({ nativeEvent: { layout: { x: 0, y: 0, width, height: 400 } } });
/** 'table' (role="table") or 'cards' (accessibilityRole="list"), read off the root element. */
const mode = (testID: string) => {
  const root = screen.getByTestId(testID);
  return root.props.role === 'table' ? 'table' : root.props.accessibilityRole === 'list' ? 'cards' : 'unknown';
};

test('a table on a wide window until the space it is given is narrower than minTableWidth', () => {
  setWidth(1440);
  renderWithClient(
    <DataTable caption="Plans" columns={columns} rows={rows} rowKey={(r) => r.id} cardsBelow="desktop" minTableWidth={920} testID="t" />,
  );
  expect(mode('t')).toBe('table');
  act(() => fireEvent(screen.getByTestId('t'), 'layout', layout(1100)));
  expect(mode('t')).toBe('table');
  act(() => fireEvent(screen.getByTestId('t'), 'layout', layout(700)));
  expect(mode('t')).toBe('cards');
  // Both rows are still there, one card each.
  expect(screen.getByText('Intermittent operating life')).toBeOnTheScreen();
  expect(screen.getByText('Intermittent life')).toBeOnTheScreen();
  // Wider again (the window grew): back to the table.
  act(() => fireEvent(screen.getByTestId('t'), 'layout', layout(1000)));
  expect(mode('t')).toBe('table');
});

test('without minTableWidth the breakpoint alone decides', () => {
  setWidth(1440);
  renderWithClient(<DataTable caption="Plans" columns={columns} rows={rows} rowKey={(r) => r.id} cardsBelow="desktop" testID="t" />);
  act(() => fireEvent(screen.getByTestId('t'), 'layout', layout(500)));
  expect(mode('t')).toBe('table');
  setWidth(800);
  renderWithClient(<DataTable caption="Plans" columns={columns} rows={rows} rowKey={(r) => r.id} cardsBelow="desktop" testID="t2" />);
  expect(mode('t2')).toBe('cards');
});
