import { fireEvent, screen, waitFor } from '@testing-library/react-native';
import { RunMakeUpCard } from '@/components/runs/RunMakeUp';
import { makeUpKeys } from '@/components/queries/make-up';
import type { MakeUpView } from '@/shared/schemas/make-up';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const user = (role: string) => ({
  id: '00000000-0000-4000-8000-000000000003',
  email: 'e@x',
  name: 'E',
  role,
  notifyAlarms: true,
  notifyReadPoints: true,
});
const runId = '00000000-0000-4000-8000-0000000000cc';
const lotC = {
  lot: { id: '00000000-0000-4000-8000-0000000000c1', code: 'HG2612-C' },
  status: 'possible' as const,
  explanation:
    'A make-up of 2 fresh devices, judged with the 75 still in the sample, restores 77 devices at accept number 0: LTPD 2.95 % (now 3.02 %).',
  booked: 77,
  valid: 75,
  failures: 0,
  lostCount: 2,
  ltpdNow: 0.030236,
  makeUpSize: 2,
  restoredLtpd: 0.029472,
  noFailureRoom: false,
  freshInLot: 53,
  notStarted: 0,
};
const view: MakeUpView = {
  runId,
  runCode: 'HTRB-2612-C',
  sampleId: '00000000-0000-4000-8000-0000000000dd',
  plan: { id: 'p', name: 'HTRB 150 °C', sampleSize: 77, acceptNumber: 0 },
  confidence: 0.9,
  status: 'possible',
  explanation: lotC.explanation,
  rule: 'A make-up run of fresh devices … (common practice).',
  sampleBookedSize: 77,
  lost: [
    { serial: 'C0010', runCode: 'HTRB-2612-C', lotCode: 'HG2612-C', kind: 'removed', why: 'lost at 500 h: not in the carrier' },
    {
      serial: 'C0031',
      runCode: 'HTRB-2612-C',
      lotCode: 'HG2612-C',
      kind: 'tripped',
      why: 'socket tripped at 410 h; failure, re-seat or exclusion not yet recorded',
    },
  ],
  planLtpd: 0.029472,
  makeUpSize: 2,
  lots: [lotC],
  slot: {
    rigId: '00000000-0000-4000-8000-0000000000ee',
    rigCode: 'OV-02',
    rigName: 'Oven 2',
    start: '2026-12-22T18:50:00.000Z',
    end: '2027-01-04T10:50:00.000Z',
  },
  slotProblems: [],
  needsOverride: false,
};

test('an engineer sees what was lost, the LTPD now against the plan, and books the proposed make-up in one press', async () => {
  setWidth(1440);
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('engineer') } },
    [`GET /api/runs/${runId}/make-up`]: { status: 200, body: view },
    [`POST /api/runs/${runId}/make-up`]: { status: 201, body: { runs: [{ id: '00000000-0000-4000-8000-0000000000ff' }] } },
  });
  renderWithClient(<RunMakeUpCard runId={runId} />);
  expect(await screen.findByTestId('make-up-card')).toBeOnTheScreen();
  expect(screen.getByTestId('make-up-status')).toHaveTextContent('Make-up of 2');
  expect(screen.getByTestId('make-up-lost-count')).toHaveTextContent('1 device lost or excluded · 1 tripped, undecided');
  expect(screen.getByTestId('make-up-ltpd-now')).toHaveTextContent('3.02 %');
  expect(screen.getByTestId('make-up-ltpd-plan')).toHaveTextContent('2.95 %');
  expect(
    screen.getByText('C0031 (HTRB-2612-C): socket tripped at 410 h; failure, re-seat or exclusion not yet recorded'),
  ).toBeOnTheScreen();
  expect(screen.getByTestId('make-up-slot')).toHaveTextContent(/^Earliest rig time: OV-02 \(Oven 2\), /);
  fireEvent.press(await screen.findByText('Book the make-up on OV-02'));
  await waitFor(() => expect(fetch.mock.calls.some(([, init]) => init?.method === 'POST')).toBe(true));
  const post = fetch.mock.calls.find(([, init]) => init?.method === 'POST')!;
  expect(JSON.parse(String(post[1]!.body))).toEqual({
    rigId: view.slot!.rigId,
    start: view.slot!.start,
    makeUpSize: 2,
    sampleBookedSize: 77,
    lots: [{ lotId: lotC.lot.id, makeUpSize: 2 }],
  });
});

test('an operator sees the proposal but no button; a run with nothing lost shows no card', async () => {
  setWidth(390);
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('operator') } },
    [`GET /api/runs/${runId}/make-up`]: { status: 200, body: view },
  });
  const first = renderWithClient(<RunMakeUpCard runId={runId} />);
  expect(await screen.findByText('Engineers book make-up runs.')).toBeOnTheScreen();
  expect(screen.queryByTestId('make-up-book')).toBeNull();
  first.unmount();
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('engineer') } },
    [`GET /api/runs/${runId}/make-up`]: {
      status: 200,
      body: {
        ...view,
        status: 'nothing-to-restore',
        lost: [],
        makeUpSize: 0,
        lots: [{ ...lotC, status: 'nothing-to-restore', valid: 77, lostCount: 0, makeUpSize: 0 }],
        slot: null,
      },
    },
  });
  const second = renderWithClient(<RunMakeUpCard runId={runId} />);
  // The answer has arrived (so the empty render is the answer's, not the loading state's).
  await waitFor(() => expect(second.client.getQueryData<MakeUpView>(makeUpKeys.one(runId))?.status).toBe('nothing-to-restore'));
  expect(screen.queryByTestId('make-up-card')).toBeNull();
});

test('a run over two lots shows a block per lot and books only the lot that lost devices', async () => {
  setWidth(1440);
  const lotA = { ...lotC, lot: { id: '00000000-0000-4000-8000-0000000000a1', code: 'HG2611-A' }, booked: 24, valid: 22, makeUpSize: 2 };
  const lotB = {
    ...lotC,
    lot: { id: '00000000-0000-4000-8000-0000000000b1', code: 'HG2611-B' },
    status: 'nothing-to-restore' as const,
    explanation: '24 devices are still in the sample; the plan asks for 24, so its LTPD of 9.15 % stands without a make-up.',
    booked: 24,
    valid: 24,
    lostCount: 0,
    makeUpSize: 0,
    restoredLtpd: null,
  };
  const two: MakeUpView = {
    ...view,
    runCode: 'HTRB-2611-A+1',
    explanation: 'Run HTRB-2611-A+1 holds 2 lots; the verdict judges each on its own against the plan’s 24 devices at accept number 0.',
    lost: [
      { serial: 'A0101', runCode: 'HTRB-2611-A+1', lotCode: 'HG2611-A', kind: 'removed', why: 'lost at 168 h' },
      { serial: 'A0102', runCode: 'HTRB-2611-A+1', lotCode: 'HG2611-A', kind: 'removed', why: 'excluded at 168 h' },
    ],
    lots: [lotA, lotB],
  };
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('engineer') } },
    [`GET /api/runs/${runId}/make-up`]: { status: 200, body: two },
    [`POST /api/runs/${runId}/make-up`]: { status: 201, body: { runs: [{ id: '00000000-0000-4000-8000-0000000000ff' }] } },
  });
  renderWithClient(<RunMakeUpCard runId={runId} />);
  expect(await screen.findByTestId('make-up-card')).toBeOnTheScreen();
  expect(screen.getByTestId('make-up-lost-count')).toHaveTextContent('2 devices lost or excluded');
  expect(screen.getByTestId('make-up-lot-HG2611-A')).toHaveTextContent(/Lot HG2611-AMake-up of 2/);
  expect(screen.getByTestId('make-up-lot-HG2611-A')).toHaveTextContent(/22 of 24 booked/);
  expect(screen.getByTestId('make-up-lot-HG2611-B')).toHaveTextContent(/Lot HG2611-BSample restored/);
  expect(screen.getByText('A0101 (lot HG2611-A, HTRB-2611-A+1): lost at 168 h')).toBeOnTheScreen();
  expect(screen.queryByTestId('make-up-ltpd-now')).toBeNull();
  expect(screen.getByTestId('make-up-per-lot')).toHaveTextContent(
    'One press books 1 make-up run on the rig, one per lot made up, so each run’s sockets take only its own lot’s devices.',
  );
  fireEvent.press(await screen.findByText('Book the make-up on OV-02'));
  await waitFor(() => expect(fetch.mock.calls.some(([, init]) => init?.method === 'POST')).toBe(true));
  const post = fetch.mock.calls.find(([, init]) => init?.method === 'POST')!;
  expect(JSON.parse(String(post[1]!.body))).toEqual({
    rigId: view.slot!.rigId,
    start: view.slot!.start,
    makeUpSize: 2,
    sampleBookedSize: 77,
    lots: [{ lotId: lotA.lot.id, makeUpSize: 2 }],
  });
});
