import { fireEvent, screen, waitFor } from '@testing-library/react-native';
import { AccountScreen } from '@/components/account/AccountScreen';
import { forecastKeys } from '@/components/queries/forecast';
import type { MyForecastAlert } from '@/shared/schemas/forecast';
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
const lab: MyForecastAlert = { mode: 'lab', below: null, labBelow: 0.5, notifyReadPoints: true, effective: 0.5, updatedAt: null };

test('an engineer sees the level they are told at and sets their own; a bad level shows the server’s words', async () => {
  setWidth(390);
  const puts: unknown[] = [];
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('engineer') } },
    'GET /api/forecast/alert/mine': { status: 200, body: lab },
    'PUT /api/forecast/alert/mine': (init) => {
      const body = JSON.parse(String(init.body));
      puts.push(body);
      if (body.below > 0.99)
        return {
          status: 400,
          body: { error: { code: 'bad_request', message: 'Check the fields', fields: { below: ['Chance of passing: at most 0.99'] } } },
        };
      return { status: 200, body: { ...lab, mode: 'own', below: body.below, effective: body.below, updatedAt: '2026-12-05T06:00:00Z' } };
    },
  });
  renderWithClient(<AccountScreen />);
  expect(await screen.findByTestId('forecast-alert-now')).toHaveTextContent(
    'You follow the lab’s level: you are told when a lot’s chance of passing falls below 50 %.',
  );
  expect(screen.queryByTestId('forecast-alert-level')).toBeNull();
  fireEvent.press(screen.getByLabelText('At my own level'));
  fireEvent.changeText(await screen.findByTestId('forecast-alert-level'), '150');
  fireEvent.press(screen.getByTestId('forecast-alert-save'));
  expect(await screen.findByText('Chance of passing: at most 0.99')).toBeOnTheScreen();
  fireEvent.changeText(screen.getByTestId('forecast-alert-level'), '40');
  fireEvent.press(screen.getByTestId('forecast-alert-save'));
  await waitFor(() =>
    expect(screen.getByTestId('forecast-alert-now')).toHaveTextContent(
      'You are told when a lot’s chance of passing falls below your own level of 40 %.',
    ),
  );
  expect(puts).toEqual([
    { mode: 'own', below: 1.5 },
    { mode: 'own', below: 0.4 },
  ]);
});

test('an engineer following the lab’s level with read-point notices off is told they hear nothing; an operator has no alert card', async () => {
  setWidth(1440);
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: { ...user('engineer'), notifyReadPoints: false } } },
    'GET /api/forecast/alert/mine': { status: 200, body: { ...lab, notifyReadPoints: false, effective: null } },
  });
  const first = renderWithClient(<AccountScreen />);
  expect(await screen.findByTestId('forecast-alert-now')).toHaveTextContent(/your read-point notices are off, so you are not told/);
  first.unmount();
  const fetch = mockFetch({ 'GET /api/auth/me': { status: 200, body: { user: user('operator') } } });
  const second = renderWithClient(<AccountScreen />);
  expect(await screen.findByTestId('account-screen')).toBeOnTheScreen();
  expect(screen.queryByTestId('forecast-alert-mine')).toBeNull();
  expect(second.client.getQueryData(forecastKeys.mine())).toBeUndefined();
  expect(fetch.mock.calls.some(([url]) => String(url).includes('/api/forecast/alert/mine'))).toBe(false);
});
