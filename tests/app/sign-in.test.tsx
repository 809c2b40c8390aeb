import { fireEvent, screen, waitFor } from '@testing-library/react-native';
import { SignInScreen } from '@/components/auth/SignInScreen';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));
const { router, useLocalSearchParams } = jest.requireMock('expo-router');

const admin = { id: '6f1c2c4e-8a51-4a8e-9a3f-0c1d2e3f4a5b', email: 'mara.quint@harrowgate.example', name: 'Mara Quint', role: 'admin' };

beforeEach(() => {
  jest.clearAllMocks();
  setWidth(390);
});

function fillAndSubmit(email: string, password: string) {
  fireEvent.changeText(screen.getByLabelText('E-mail'), email);
  fireEvent.changeText(screen.getByLabelText('Password'), password);
  fireEvent.press(screen.getByRole('button', { name: 'Sign in' }));
}

test('renders the sign-in form with a line on what Emberlot is', () => {
  renderWithClient(<SignInScreen />);
  expect(screen.getByRole('heading', { name: 'Sign in' })).toBeOnTheScreen();
  expect(screen.getByLabelText('E-mail')).toBeOnTheScreen();
  expect(screen.getByLabelText('Password')).toBeOnTheScreen();
  expect(screen.getByText(/accelerated stress runs/)).toBeOnTheScreen();
});

test('posts the typed credentials to the sign-in endpoint and opens the role home', async () => {
  const fetch = mockFetch({ 'POST /api/auth/sign-in': { status: 200, body: { user: admin } } });
  renderWithClient(<SignInScreen />);
  fillAndSubmit('Mara.Quint@harrowgate.example', 'correct horse battery');
  await waitFor(() => expect(router.replace).toHaveBeenCalledWith('/people'));
  expect(fetch).toHaveBeenCalledTimes(1);
  const [url, maybeInit] = fetch.mock.calls[0];
  const init = maybeInit!;
  expect(url).toBe('/api/auth/sign-in');
  expect(init.method).toBe('POST');
  expect(init.credentials).toBe('include');
  // The shared schema lower-cases the e-mail before it is sent.
  expect(JSON.parse(init.body as string)).toEqual({ email: 'mara.quint@harrowgate.example', password: 'correct horse battery' });
});

test("shows the API's message on a 401 and stays on the page", async () => {
  mockFetch({
    'POST /api/auth/sign-in': { status: 401, body: { error: { code: 'unauthenticated', message: 'Wrong e-mail or password.' } } },
  });
  renderWithClient(<SignInScreen />);
  fillAndSubmit('mara.quint@harrowgate.example', 'not it');
  expect(await screen.findByText('Wrong e-mail or password.')).toBeOnTheScreen();
  expect(router.replace).not.toHaveBeenCalled();
});

test('shows a throttling message from the API as it is', async () => {
  mockFetch({
    'POST /api/auth/sign-in': {
      status: 429,
      body: { error: { code: 'too_many_requests', message: 'Too many attempts. Try again in 15 minutes.' } },
    },
  });
  renderWithClient(<SignInScreen />);
  fillAndSubmit('mara.quint@harrowgate.example', 'whatever');
  expect(await screen.findByText('Too many attempts. Try again in 15 minutes.')).toBeOnTheScreen();
});

test('checks the form before calling the API', () => {
  const fetch = mockFetch({});
  renderWithClient(<SignInScreen />);
  fillAndSubmit('not-an-address', '');
  expect(screen.getByText('Enter an e-mail address')).toBeOnTheScreen();
  expect(screen.getByText('Enter your password')).toBeOnTheScreen();
  expect(fetch).not.toHaveBeenCalled();
});

test('says the session has ended when sent here after a 401', () => {
  useLocalSearchParams.mockReturnValue({ ended: '1' });
  renderWithClient(<SignInScreen />);
  expect(screen.getByText('Your session has ended. Sign in again.')).toBeOnTheScreen();
  useLocalSearchParams.mockReturnValue({});
});
