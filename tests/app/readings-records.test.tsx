import { fireEvent, screen } from '@testing-library/react-native';
import { StoredReadingsPanel } from '@/components/readings/StoredReadingsPanel';
import { UploadsPanel } from '@/components/readings/UploadsPanel';
import { keys } from '@/components/queries/keys';
import { mockFetch, renderWithClient, setWidth, testQueryClient } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const RUN = '00000000-0000-4000-8000-0000000000aa';
const DEV = '00000000-0000-4000-8000-0000000000d1';
const op = {
  id: '00000000-0000-4000-8000-000000000002',
  email: 'o@x',
  name: 'Olu Marsh',
  role: 'operator',
  notifyAlarms: true,
  notifyReadPoints: true,
};
const mgr = { ...op, role: 'manager' };
const base = {
  id: '00000000-0000-4000-8000-0000000000r1',
  deviceId: DEV,
  serial: 'C0065',
  lotCode: 'HG2612-C',
  readPointH: 168,
  hfe: 110.22,
  hfeIcA: 0.15,
  hfeVceV: 5,
  icboA: 15.25e-9,
  icboVcbV: 112,
  vcesatV: 0.1971,
  bvceoV: null,
  measuredC: 25,
  measuredAt: '2026-12-01T08:00:00Z',
  late: false,
  uploadId: null,
  manual: true,
  result: 'measured',
  conditionsFlag: null,
  confirmedAt: null,
  version: 2,
  changeReason: 'Tester printout re-read',
  deviation: [],
};
const version = (v: number, hfe: number, current: boolean, reason: string | null) => ({
  measurementId: base.id,
  readPointH: 168,
  version: v,
  current,
  result: 'measured',
  hfe,
  hfeIcA: 0.15,
  hfeVceV: 5,
  icboA: 15.25e-9,
  icboVcbV: 112,
  vcesatV: 0.1971,
  bvceoV: null,
  measuredC: 25,
  measuredAt: '2026-12-01T08:00:00Z',
  late: false,
  uploadId: null,
  fileName: null,
  enteredByName: v === 1 ? 'Tobias Renwick' : 'Olu Marsh',
  reason,
  deviation: [],
  recordedAt: '2026-12-02T08:00:00Z',
});

test('a corrected reading shows its version; its history lists both versions with the reason', async () => {
  setWidth(390);
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: op } },
    [`GET /api/measurements/runs/${RUN}/read-points/168`]: { status: 200, body: { items: [base] } },
    [`GET /api/measurements/runs/${RUN}/devices/${DEV}/history`]: {
      status: 200,
      body: {
        runId: RUN,
        runCode: 'HTRB-2612-C-2',
        deviceId: DEV,
        serial: 'C0065',
        lotCode: 'HG2612-C',
        versions: [version(1, 109.72, false, null), version(2, 110.22, true, 'Tester printout re-read')],
      },
    },
  });
  renderWithClient(<StoredReadingsPanel runId={RUN} hours={168} timeZeroLocked={false} />);
  expect(await screen.findByText('Version 2 · corrected')).toBeOnTheScreen();
  expect(await screen.findByText('Correct C0065')).toBeOnTheScreen(); // once /api/auth/me has answered
  fireEvent.press(screen.getByText('History of C0065'));
  expect(await screen.findByText('Superseded')).toBeOnTheScreen();
  expect(screen.getByText('hFE 109.72 · ICBO 15.25 nA · VCE(sat) 197.1 mV')).toBeOnTheScreen();
  expect(screen.getByText('Reason: Tester printout re-read')).toBeOnTheScreen();
});

test('time zero after Start is announced as locked; a manager sees no Correct action', async () => {
  setWidth(1440);
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: mgr } },
    [`GET /api/measurements/runs/${RUN}/read-points/0`]: {
      status: 200,
      body: { items: [{ ...base, readPointH: 0, version: 1, changeReason: null }] },
    },
  });
  // The session is known before the panel renders, so the missing button is the role's doing, not a pending /api/auth/me.
  const client = testQueryClient();
  client.setQueryData(keys.me, mgr);
  renderWithClient(<StoredReadingsPanel runId={RUN} hours={0} timeZeroLocked />, client);
  expect(await screen.findByText('Time zero is locked')).toBeOnTheScreen();
  expect(await screen.findByText('History of C0065')).toBeOnTheScreen();
  expect(screen.queryByText('Correct C0065')).toBeNull();
});

test('each stored upload offers its file; one from before files were kept says only its hash is on record', async () => {
  setWidth(390);
  const up = {
    id: '00000000-0000-4000-8000-0000000000u1',
    readPointH: 500,
    fileName: 'tester-500h.csv',
    fileSha256: 'a'.repeat(64),
    sizeBytes: 2048,
    rowsTotal: 13,
    rowsStored: 13,
    rowsRejected: 0,
    uploadedByName: 'Olu Marsh',
    createdAt: '2026-12-02T08:00:00Z',
    downloadPath: '/api/measurements/uploads/00000000-0000-4000-8000-0000000000u1/file',
  };
  mockFetch({
    [`GET /api/measurements/runs/${RUN}/uploads`]: {
      status: 200,
      body: { items: [up, { ...up, id: 'old', fileName: 'old.csv', sizeBytes: null, downloadPath: null }] },
    },
  });
  renderWithClient(<UploadsPanel runId={RUN} />);
  expect(await screen.findByText('Download tester-500h.csv (2.0 kB)')).toBeOnTheScreen();
  expect(screen.getByText('Uploaded before files were kept: only its SHA-256 is on record.')).toBeOnTheScreen();
  expect(screen.queryByText(/Download old\.csv/)).toBeNull();
});
