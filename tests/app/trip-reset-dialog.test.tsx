import { fireEvent, screen, waitFor, within } from '@testing-library/react-native';
import type { FloorSocket } from '@/shared/schemas/floor';
import type { TripResetResult } from '@/shared/schemas/protection';
import { TripResetDialog, rigAnswerText } from '@/components/floor/TripResetDialog';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const RUN = { id: '00000000-0000-4000-8000-0000000000aa', code: 'HOTL-2609-D-2' };
const socket: FloorSocket = {
  index: 5,
  caseC: null,
  vV: 0,
  iA: 0,
  biasOn: false,
  tripped: true,
  serial: 'HPD-L2403-006',
  tripReason: 'Tj 150.2 °C (max 150.0 °C) has reached the rating',
  junction: null,
};
const URL = `POST /api/runs/${RUN.id}/sockets/5/reset-trip`;
const result: TripResetResult = {
  runId: RUN.id,
  runCode: RUN.code,
  rigCode: 'OV-03',
  socket: 5,
  serial: 'HPD-L2403-006',
  planCheck: { status: 'ok', findings: [] },
  rig: { resetTrip: { status: 'confirmed' }, bias: { status: 'confirmed' } },
};

beforeEach(() => setWidth(1440));

test('shows the caution and the trip; a short reason keeps the button disabled; a reason is sent and the answer handed back', async () => {
  const fetch = mockFetch({ [URL]: { status: 200, body: result } });
  const onDone = jest.fn();
  renderWithClient(<TripResetDialog socket={socket} rigCode="OV-03" run={RUN} onClose={() => undefined} onDone={onDone} />);
  const dialog = screen.getByTestId('trip-reset-dialog');
  expect(within(dialog).getByText(/A software trip is no substitute for the rig's hardware interlocks\./)).toBeOnTheScreen();
  expect(within(dialog).getByText(`Tripped: ${socket.tripReason}`)).toBeOnTheScreen();
  fireEvent.changeText(within(dialog).getByTestId('trip-reset-reason'), 'pad ok');
  fireEvent.press(within(dialog).getByRole('button', { name: 'Reset and re-energise' }));
  expect(fetch).not.toHaveBeenCalled();
  fireEvent.changeText(within(dialog).getByTestId('trip-reset-reason'), '  Thermal pad replaced on socket 5  ');
  fireEvent.press(within(dialog).getByRole('button', { name: 'Reset and re-energise' }));
  await waitFor(() => expect(onDone).toHaveBeenCalledTimes(1));
  expect(fetch).toHaveBeenCalledTimes(1);
  expect(JSON.parse(fetch.mock.calls[0][1]!.body as string)).toEqual({ reason: 'Thermal pad replaced on socket 5' });
  expect(onDone).toHaveBeenCalledWith(result);
  expect(rigAnswerText(result)).toBe('Latch cleared: confirmed by the rig. Bias on: confirmed by the rig.');
  // The file's first render loads the dialog's modules: 3.5 s alone, over 30 s once in a full
  // parallel run on a loaded 2-core machine.
}, 120_000);

test("the server's refusal (plan check blocks) is shown in the dialog", async () => {
  const message =
    'The plan check blocks energising socket 5 again (HPD-T150W): Reverse bias above BVCBO. Revise the plan or take the device out; the trip stays.';
  mockFetch({ [URL]: { status: 422, body: { error: { code: 'unprocessable', message } } } });
  renderWithClient(<TripResetDialog socket={socket} rigCode="OV-03" run={RUN} onClose={() => undefined} onDone={() => undefined} />);
  const dialog = screen.getByTestId('trip-reset-dialog');
  fireEvent.changeText(within(dialog).getByTestId('trip-reset-reason'), 'Checked the board, looks fine');
  fireEvent.press(within(dialog).getByRole('button', { name: 'Reset and re-energise' }));
  expect(await screen.findByText(message)).toBeOnTheScreen();
});

test('a rig that did not answer is said in words', () => {
  const failed: TripResetResult = {
    ...result,
    rig: {
      resetTrip: { status: 'failed', error: 'No answer from OV-03 within 5000 ms' },
      bias: { status: 'not-sent', error: 'the latch was not cleared' },
    },
  };
  expect(rigAnswerText(failed)).toBe('Latch cleared: No answer from OV-03 within 5000 ms. Bias on: the latch was not cleared.');
});
