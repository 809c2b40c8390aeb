import { fireEvent, screen } from '@testing-library/react-native';
import { ScheduleScreen } from '@/components/schedule/ScheduleScreen';
import { RunDetailScreen } from '@/components/runs/RunDetailScreen';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));
const eng = {
  id: '00000000-0000-4000-8000-000000000001',
  email: 'e@x',
  name: 'E',
  role: 'engineer',
  notifyAlarms: true,
  notifyReadPoints: true,
};
const now = Date.now();
const iso = (d: number) => new Date(now + d).toISOString();
const run = {
  id: '00000000-0000-4000-8000-0000000000aa',
  code: 'HTRB-2611-A',
  state: 'loading',
  stateLabel: 'Loading',
  plan: {
    id: 'p',
    planKey: 'k',
    name: 'HTRB 145',
    version: 2,
    kind: 'htrb',
    chamberC: 145,
    humidityPct: null,
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    biasV: 112,
    checkStatus: 'ok',
  },
  rig: { id: 'r', code: 'OV-01', name: 'Oven 1', socketCount: 64, online: true },
  lots: [{ id: 'l', code: 'HG2611-A' }],
  partNumber: 'HPD-2N140',
  sampleSize: 3,
  loadedCount: 2,
  trippedCount: 0,
  scheduledStart: iso(0),
  scheduledEnd: iso(100000),
  startedAt: null,
  finishedAt: null,
  stateChangedAt: iso(0),
  stressHours: 0,
  targetH: 1000,
  nextReadPointH: 168,
  lastReadPointH: 0,
  heatingSince: null,
  ambientReachedAt: null,
  biasRemovedAt: null,
  abortReason: null,
  override: { reason: 'Agreed with the customer', byName: 'E' },
  allowedActions: ['load', 'start', 'abort'],
  rowVersion: 3,
  createdAt: iso(0),
  sockets: [{ socket: 0, serial: 'A0001', lotCode: 'HG2611-A', accruedHours: 0, tripped: false, tripReason: null, failedAtH: null }],
  audit: [{ id: '1', at: iso(0), actor: 'e@x', action: 'run.book', reason: null, details: {} }],
  socketsTaken: [5],
};
const timeline = {
  from: iso(-10000),
  to: iso(200000),
  now: iso(0),
  msPerClockH: 1000,
  rows: [
    {
      rigId: 'r',
      code: 'OV-01',
      name: 'Oven 1',
      socketCount: 64,
      online: true,
      active: true,
      bars: [
        {
          runId: run.id,
          code: run.code,
          state: 'loading',
          stateLabel: 'Loading',
          start: iso(0),
          end: iso(100000),
          planName: 'HTRB',
          chamberC: 145,
          humidityPct: null,
          sampleSize: 3,
          stressHours: 0,
          targetH: 1000,
          dueAt: iso(90000),
          priority: 4,
          lateH: 150,
        },
      ],
      maintenance: [{ id: 'm', start: iso(120000), end: iso(150000), reason: 'seal' }],
    },
  ],
};

for (const w of [1440, 390]) {
  test(`schedule renders at ${w}px`, async () => {
    setWidth(w);
    mockFetch({
      'GET /api/auth/me': { status: 200, body: { user: eng } },
      'GET /api/runs/timeline': { status: 200, body: timeline },
      'GET /api/runs?open=1': { status: 200, body: { items: [run] } },
      'GET /api/plans': { status: 200, body: { items: [] } },
    });
    renderWithClient(<ScheduleScreen />);
    // The open runs and the due-date list both name the run; the list says how late, in words.
    expect(await screen.findAllByText('HTRB-2611-A')).toHaveLength(2);
    expect(screen.getByText('Late by 6.3 d')).toBeOnTheScreen();
    expect(screen.getByText('Urgent')).toBeOnTheScreen();
    expect(screen.getByText('Zoom in')).toBeOnTheScreen();
    expect(screen.getByText('Scale: 1 day per 100 px')).toBeOnTheScreen();
    fireEvent.press(screen.getByText('Zoom out'));
    expect(screen.getByText('Scale: 2 days per 100 px')).toBeOnTheScreen();
    fireEvent.press(screen.getByText('Book a run'));
    expect(await screen.findByText('Find rigs')).toBeOnTheScreen();
  });
}

test('run detail renders, checks a pasted column', async () => {
  setWidth(1440);
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: { ...eng, role: 'operator' } } },
    [`GET /api/runs/${run.id}`]: { status: 200, body: run },
    [`PUT /api/runs/${run.id}/sockets`]: {
      status: 200,
      body: {
        stored: false,
        needed: 3,
        loaded: 1,
        readyToStart: false,
        summary: '1 socket needs attention',
        run,
        flags: [{ socket: 1, serial: 'A0001', problem: 'duplicate', blocking: true, message: 'Serial A0001 is in socket 0 already.' }],
      },
    },
  });
  renderWithClient(<RunDetailScreen id={run.id} />);
  expect(await screen.findByText('HTRB-2611-A')).toBeOnTheScreen();
  expect(screen.getAllByText('Booked').length).toBe(2);
  fireEvent.changeText(screen.getByLabelText('Serials'), 'A0001\nA0001\n');
  fireEvent.press(screen.getByText('Check'));
  expect(await screen.findByText('Serial A0001 is in socket 0 already.')).toBeOnTheScreen();
  const put = fetch.mock.calls.find((c) => (c[1] as RequestInit)?.method === 'PUT')!;
  expect(JSON.parse((put[1] as RequestInit).body as string)).toEqual({ rowVersion: 3, sockets: { 0: 'A0001', 1: 'A0001' }, dryRun: true });
});
