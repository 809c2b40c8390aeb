/**
 * The qualification screen: the matrix as cards on a phone and as a grid from 1024 px; a cell's
 * panel with its verdict and source words; an engineer waives a cell with a reason (the button
 * waits for one), a manager reads without the editor.
 */
import { fireEvent, screen, waitFor } from '@testing-library/react-native';
import { QualificationScreen } from '@/components/qualifications/QualificationScreen';
import type { QualCellView, QualificationDetail } from '@/shared/schemas/qualifications';
import { QUAL_TEMPLATES } from '@/shared/qualification/templates';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));
const { useLocalSearchParams } = jest.requireMock('expo-router');
// jest runs no dynamic import(): the lot chart gets a stand-in that shows what it is given.
jest.mock('@/components/charts/LazyCharts', () => {
  const { Text } = require('react-native');
  return {
    LotDistributionChart: ({ lot }: { lot: { lotCode: string; readPoints: Array<{ hours: number }> } }) => (
      <Text testID="chart-data">{`${lot.lotCode}: ${lot.readPoints.map((r) => r.hours).join(', ')} h`}</Text>
    ),
  };
});

const ID = '11111111-1111-4111-8111-111111111111';
const user = (role: string) => ({
  id: '00000000-0000-4000-8000-000000000002',
  email: 'e@x',
  name: 'Test',
  role,
  notifyAlarms: true,
  notifyReadPoints: true,
});
const groups = QUAL_TEMPLATES['aec-q101'].groups.filter((g) => g.key === 'htrb' || g.key === 'esd-hbm');
const cell = (over: Partial<QualCellView>): QualCellView => ({
  id: '22222222-2222-4222-8222-222222222201',
  groupKey: 'htrb',
  lotId: 'a',
  lotCode: 'HG2611-A',
  planKind: 'htrb',
  plannedSample: 77,
  acceptNumber: 0,
  state: 'passed',
  verdict: 'passed',
  verdictReasons: [],
  sample: { booked: 77, judged: 77, failures: 0 },
  fit: null,
  runs: [{ id: 'r1', code: 'HTRB-2611-A', state: 'finished', rigCode: 'OV-01', planName: 'HTRB', stressHours: 1000, projectedEnd: null }],
  waiver: null,
  external: null,
  withdrawn: [],
  projectedFinish: null,
  projectionNote: null,
  ...over,
});
const detail = (cells: QualCellView[]): QualificationDetail => ({
  id: ID,
  code: 'QUAL-009',
  name: 'Test release',
  templateKey: 'aec-q101',
  templateName: 'AEC-Q101 discrete qualification',
  standard: 'AEC-Q101 Rev E, Table 2',
  sequence: 'Electrical test before and after every stress.',
  sequenceBasis: 'memory',
  deviceTypes: [{ id: 't', partNumber: 'HPD-2N140' }],
  lots: [
    { id: 'a', code: 'HG2611-A', deviceTypeId: 't' },
    { id: 'b', code: 'HG2611-B', deviceTypeId: 't' },
  ],
  status: 'in-progress',
  cellsDone: 1,
  cellsTotal: 3,
  createdAt: new Date().toISOString(),
  familyRule: '',
  groups,
  cells,
  shortLots: [],
  left: [],
  projectedFinish: null,
  projectionNote: null,
});
const CELLS = [
  cell({}),
  cell({ id: '22222222-2222-4222-8222-222222222202', lotId: 'b', lotCode: 'HG2611-B', state: 'under-stress', verdict: 'in-progress' }),
  cell({
    id: '22222222-2222-4222-8222-222222222203',
    groupKey: 'esd-hbm',
    planKind: null,
    state: 'not-started',
    verdict: null,
    sample: null,
    runs: [],
    plannedSample: 30,
  }),
];

type Answer = (init: RequestInit) => { status: number; body: unknown };

function render(
  role: string,
  width: number,
  onWaive?: Answer,
  more: Record<string, Answer | { status: number; body: unknown }> = {},
  cells = CELLS,
) {
  setWidth(width);
  useLocalSearchParams.mockReturnValue({ id: ID });
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user(role) } },
    [`GET /api/qualifications/${ID}`]: { status: 200, body: detail(cells) },
    ...(onWaive ? { [`POST /api/qualifications/${ID}/cells/${CELLS[2].id}/waiver`]: onWaive } : {}),
    ...more,
  });
  renderWithClient(<QualificationScreen />);
  return fetch;
}

test('a phone shows the matrix as cards, a wide screen as a grid', async () => {
  render('manager', 390);
  expect(await screen.findByTestId('qual-matrix-cards')).toBeOnTheScreen();
  expect(screen.queryByTestId('qual-matrix-grid')).not.toBeOnTheScreen();
  expect(screen.getByTestId('qual-cell-htrb-HG2611-B')).toHaveTextContent(/Under stress/);
});

test('wide: a grid with "not asked" where a group needs fewer lots; a manager reads a cell without the editor', async () => {
  render('manager', 1440);
  expect(await screen.findByTestId('qual-matrix-grid')).toBeOnTheScreen();
  expect(screen.getByText('not asked')).toBeOnTheScreen();
  fireEvent.press(screen.getByTestId('qual-cell-htrb-HG2611-A'));
  expect(await screen.findByTestId('qual-cell-verdict')).toHaveTextContent('Lot verdict for this stress: Passed');
  expect(screen.getByTestId('qual-cell-panel')).toHaveTextContent(
    /Source: AEC-Q101 Table 2, test B1\. Recalled, not checked against the text: confirm against the standard's current revision\./,
  );
  expect(screen.queryByTestId('qual-cell-editor')).not.toBeOnTheScreen();
});

test('an engineer waives a cell: the button waits for a reason, then the answer shows the waiver', async () => {
  const reason = 'Same package as HPD-2N120, whose ESD classification stands.';
  const fetch = render('engineer', 1440, (init) => {
    expect(JSON.parse(String(init.body))).toEqual({ reason });
    return {
      status: 200,
      body: detail([CELLS[0], CELLS[1], { ...CELLS[2], state: 'waived', waiver: { reason, by: 'Test', at: new Date().toISOString() } }]),
    };
  });
  fireEvent.press(await screen.findByTestId('qual-cell-esd-hbm-HG2611-A'));
  const waive = await screen.findByTestId('qual-cell-waive');
  fireEvent.changeText(screen.getByTestId('qual-cell-waiver-reason'), 'short');
  expect(waive).toBeDisabled();
  fireEvent.changeText(screen.getByTestId('qual-cell-waiver-reason'), reason);
  fireEvent.press(waive);
  expect(await screen.findByTestId('qual-cell-waiver')).toHaveTextContent(/Waived by Test/);
  await waitFor(() =>
    expect(fetch.mock.calls.some(([u, i]) => String(u).endsWith('/waiver') && (i as RequestInit).method === 'POST')).toBe(true),
  );
  expect(screen.getByTestId('qual-cell-esd-hbm-HG2611-A')).toHaveTextContent(/Waived/);
});

const WAIVED = { reason: 'Same package as HPD-2N120, whose ESD classification stands.', by: 'Test', at: '2026-11-02T10:00:00.000Z' };

test('an engineer withdraws a waiver: a confirmation that waits for a reason, then the cell shows the withdrawn record', async () => {
  const reason = 'The customer asks for ESD data on this lot itself.';
  const waivedCells = [CELLS[0], CELLS[1], { ...CELLS[2], state: 'waived' as const, waiver: WAIVED }];
  const fetch = render(
    'engineer',
    1440,
    undefined,
    {
      [`POST /api/qualifications/${ID}/cells/${CELLS[2].id}/withdraw`]: (init) => {
        expect(JSON.parse(String(init.body))).toEqual({ record: 'waiver', reason });
        return {
          status: 200,
          body: detail([
            CELLS[0],
            CELLS[1],
            {
              ...CELLS[2],
              withdrawn: [
                {
                  record: 'waiver',
                  text: WAIVED.reason,
                  recordedBy: 'Test',
                  recordedAt: WAIVED.at,
                  reason,
                  by: 'Test',
                  at: new Date().toISOString(),
                },
              ],
            },
          ]),
        };
      },
    },
    waivedCells,
  );
  fireEvent.press(await screen.findByTestId('qual-cell-esd-hbm-HG2611-A'));
  expect(screen.queryByTestId('qual-withdraw-external')).not.toBeOnTheScreen();
  fireEvent.press(await screen.findByTestId('qual-withdraw-waiver'));
  expect(await screen.findByTestId('qual-withdraw-dialog')).toBeOnTheScreen();
  const confirm = screen.getByRole('button', { name: 'Withdraw' });
  fireEvent.changeText(screen.getByTestId('qual-withdraw-reason'), 'short');
  expect(confirm).toBeDisabled();
  fireEvent.changeText(screen.getByTestId('qual-withdraw-reason'), reason);
  expect(confirm).toBeEnabled();
  fireEvent.press(confirm);
  expect(await screen.findByTestId('qual-cell-withdrawn')).toHaveTextContent(
    new RegExp(
      `^Withdrawn waiver \\(“${WAIVED.reason.replace(/[.()]/g, '\\$&')}”, recorded by Test\\): withdrawn by Test, .+ — ${reason}$`,
    ),
  );
  expect(screen.getByTestId('qual-cell-esd-hbm-HG2611-A')).toHaveTextContent(/Not started/);
  expect(screen.queryByTestId('qual-withdraw-waiver')).not.toBeOnTheScreen();
  expect(fetch.mock.calls.filter(([u]) => String(u).endsWith('/withdraw'))).toHaveLength(1);
});

test('a manager reads a waived cell without the withdraw button; a cell with runs opens its own drift chart', async () => {
  const drift = {
    cellId: CELLS[0].id,
    groupKey: 'htrb',
    lotCode: 'HG2611-A',
    planName: 'HTRB 150 °C',
    runCodes: ['HTRB-2611-A'],
    plan: { durationH: 1000 },
    criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
    readPointsH: [0, 168, 500, 1000],
    readPoints: [0, 168, 500, 1000].map((hours) => ({ hours })),
    trends: [],
    note: null,
  };
  const fetch = render(
    'manager',
    390,
    undefined,
    { [`GET /api/qualifications/${ID}/cells/${CELLS[0].id}/drift`]: { status: 200, body: drift } },
    [CELLS[0], CELLS[1], { ...CELLS[2], state: 'waived', waiver: WAIVED }],
  );
  fireEvent.press(await screen.findByTestId('qual-cell-esd-hbm-HG2611-A'));
  expect(await screen.findByTestId('qual-cell-waiver')).toBeOnTheScreen();
  expect(screen.queryByTestId('qual-withdraw-waiver')).not.toBeOnTheScreen();
  // A group with no run kind has no chart to open.
  expect(screen.queryByTestId('qual-cell-drift-toggle')).not.toBeOnTheScreen();
  fireEvent.press(screen.getByTestId('qual-cell-htrb-HG2611-A'));
  fireEvent.press(await screen.findByTestId('qual-cell-drift-toggle'));
  expect(await screen.findByTestId('qual-cell-drift-source')).toHaveTextContent(
    "Lot HG2611-A on run HTRB-2611-A (HTRB 150 °C): this lot's devices only.",
  );
  expect(screen.getByTestId('chart-data')).toHaveTextContent('HG2611-A: 0, 168, 500, 1000 h');
  expect(fetch.mock.calls.some(([u]) => String(u) === `/api/qualifications/${ID}/cells/${CELLS[0].id}/drift`)).toBe(true);
});
