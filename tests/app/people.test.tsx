import { fireEvent, screen, waitFor, within } from '@testing-library/react-native';
import { PeopleScreen } from '@/components/people/PeopleScreen';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const base = { notifyAlarms: true, notifyReadPoints: true, createdAt: '2025-10-01T00:00:00Z' };
const admin = {
  ...base,
  id: '00000000-0000-4000-8000-000000000001',
  email: 'mara.quint@harrowgate.example',
  name: 'Mara Quint',
  role: 'admin',
  active: true,
  lastSignInAt: '2026-03-02T08:14:00Z',
};
const operator = {
  ...base,
  id: '00000000-0000-4000-8000-000000000002',
  email: 'tomas.feld@harrowgate.example',
  name: 'Tomas Feld',
  role: 'operator',
  active: true,
  lastSignInAt: null,
};

beforeEach(() => setWidth(1440));

test('lists people with role, status and last sign-in', async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/users': { status: 200, body: { items: [admin, operator] } },
  });
  renderWithClient(<PeopleScreen />);
  expect(await screen.findByText('Tomas Feld')).toBeOnTheScreen();
  expect(screen.getByText('Floor operator')).toBeOnTheScreen();
  expect(screen.getAllByText('Active')).toHaveLength(2);
  expect(screen.getByText('Never')).toBeOnTheScreen();
  await waitFor(() => expect(screen.getByText('This is you')).toBeOnTheScreen());
});

test('deactivating asks first, then sends active: false', async () => {
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/users': { status: 200, body: { items: [admin, operator] } },
    [`PATCH /api/users/${operator.id}`]: { status: 200, body: { ...operator, active: false } },
  });
  renderWithClient(<PeopleScreen />);
  fireEvent.press(await screen.findByRole('button', { name: 'Deactivate Tomas Feld' }));
  const dialog = screen.getByTestId('confirm-active');
  expect(within(dialog).getByText(/will not be able to sign in/)).toBeOnTheScreen();
  fireEvent.press(within(dialog).getByRole('button', { name: 'Deactivate' }));
  expect(await screen.findByText('Tomas Feld is deactivated and cannot sign in.')).toBeOnTheScreen();
  const patch = fetch.mock.calls.find(([, init]) => init?.method === 'PATCH')!;
  expect(JSON.parse(patch[1]!.body as string)).toEqual({ active: false });
});

test('the add form shows field errors from the shared schema without calling the API', async () => {
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/users': { status: 200, body: { items: [admin] } },
  });
  renderWithClient(<PeopleScreen />);
  fireEvent.press(await screen.findByRole('button', { name: 'Add person' }));
  fireEvent.changeText(screen.getByLabelText('E-mail'), 'nope');
  fireEvent.changeText(screen.getByLabelText('First password'), 'short');
  const calls = fetch.mock.calls.length;
  fireEvent.press(within(screen.getByTestId('add-person-form')).getByRole('button', { name: 'Add person' }));
  expect(screen.getByText('Enter a name')).toBeOnTheScreen();
  expect(screen.getByText('Enter an e-mail address')).toBeOnTheScreen();
  expect(screen.getByText('Choose a role')).toBeOnTheScreen();
  expect(screen.getByText('Use at least 10 characters')).toBeOnTheScreen();
  expect(fetch.mock.calls.length).toBe(calls);
});

test('a duplicate e-mail from the API shows beside the field', async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/users': { status: 200, body: { items: [admin] } },
    'POST /api/users': {
      status: 409,
      body: {
        error: { code: 'conflict', message: 'That e-mail is taken.', fields: { email: ['Someone already uses that e-mail address.'] } },
      },
    },
  });
  renderWithClient(<PeopleScreen />);
  fireEvent.press(await screen.findByRole('button', { name: 'Add person' }));
  fireEvent.changeText(screen.getByLabelText('Full name'), 'Ada Kerrow');
  fireEvent.changeText(screen.getByLabelText('E-mail'), 'mara.quint@harrowgate.example');
  fireEvent.press(screen.getByRole('radio', { name: 'Reliability engineer' }));
  fireEvent.changeText(screen.getByLabelText('First password'), 'a-long-first-password');
  fireEvent.press(within(screen.getByTestId('add-person-form')).getByRole('button', { name: 'Add person' }));
  expect(await screen.findByText('Someone already uses that e-mail address.')).toBeOnTheScreen();
});

test('a failed load shows the reason and a retry', async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/users': { status: 403, body: { error: { code: 'forbidden', message: 'Only administrators can see people.' } } },
  });
  renderWithClient(<PeopleScreen />);
  expect(await screen.findByText('Only administrators can see people.')).toBeOnTheScreen();
  expect(screen.getByRole('button', { name: 'Try again' })).toBeOnTheScreen();
});

test('an engineer opening People sends no request for the list (it would answer 403)', async () => {
  const engineer = { ...operator, id: '00000000-0000-4000-8000-000000000003', role: 'engineer', name: 'Ines Varo' };
  const fetch = mockFetch({ 'GET /api/auth/me': { status: 200, body: { user: engineer } } });
  renderWithClient(<PeopleScreen />);
  await waitFor(() => expect(fetch.mock.calls.some(([url]) => url === '/api/auth/me')).toBe(true));
  await new Promise((r) => setTimeout(r, 50));
  expect(fetch.mock.calls.map(([url]) => url)).not.toContain('/api/users');
});
