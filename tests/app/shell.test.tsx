import { fireEvent, screen } from '@testing-library/react-native';
import type { Role } from '@/shared/roles';
import { ShellFrame } from '@/components/shell/ShellFrame';
import { destinationsFor, splitForPhone } from '@/components/shell/destinations';
import { Text } from 'react-native';
import { renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const user = (role: Role) => ({
  id: '0d5f7a8b-1c2d-4e3f-8a9b-0c1d2e3f4a5b',
  email: 'ines.brack@harrowgate.example',
  name: 'Ines Brack',
  role,
});

const renderShell = (role: Role, pathname = '/floor') =>
  renderWithClient(
    <ShellFrame user={user(role)} pathname={pathname}>
      <Text>Page content</Text>
    </ShellFrame>,
  );

const ALL = [
  'Floor',
  'Alarms',
  'Read points',
  'Plans',
  'Devices & lots',
  'Schedule',
  'Lot trends',
  'Qualifications',
  'People',
  'Mail log',
  'Rigs',
  'Approvals',
  'Audit log',
  'Capacity',
];

describe('destinations per role (from the product brief)', () => {
  test.each<[Role, string[]]>([
    ['operator', ['Floor', 'Alarms', 'Read points', 'Schedule']],
    [
      'engineer',
      [
        'Floor',
        'Alarms',
        'Read points',
        'Plans',
        'Devices & lots',
        'Schedule',
        'Lot trends',
        'Qualifications',
        'Rigs',
        'Approvals',
        'Capacity',
      ],
    ],
    // Capacity: re-planning after a rig drops out and utilisation (issue #26 items 3–4).
    ['manager', ['Devices & lots', 'Schedule', 'Lot trends', 'Qualifications', 'Approvals', 'Audit log', 'Capacity']],
    ['admin', ['Floor', 'Alarms', 'People', 'Mail log', 'Rigs', 'Approvals', 'Audit log']],
  ])('%s', (role, labels) => {
    expect(destinationsFor(role).map((d) => d.label)).toEqual(labels);
  });

  test('a phone shows at most four places before "More"', () => {
    const { tabs, overflow } = splitForPhone(destinationsFor('engineer'));
    expect(tabs.map((d) => d.label)).toEqual(['Floor', 'Alarms', 'Read points', 'Plans']);
    expect(overflow.map((d) => d.label)).toEqual([
      'Devices & lots',
      'Schedule',
      'Lot trends',
      'Qualifications',
      'Rigs',
      'Approvals',
      'Capacity',
    ]);
  });
});

describe('shell on a wide screen (side rail)', () => {
  beforeEach(() => setWidth(1440));

  test('an operator sees only Floor, Alarms, Read points and Schedule', () => {
    renderShell('operator');
    const shown = ALL.filter((l) => screen.queryByRole('link', { name: l }));
    expect(shown).toEqual(['Floor', 'Alarms', 'Read points', 'Schedule']);
    expect(screen.queryByRole('link', { name: 'People' })).toBeNull();
    expect(screen.getByText('Ines Brack')).toBeOnTheScreen();
    expect(screen.getByText('Floor operator')).toBeOnTheScreen();
    expect(screen.getByRole('button', { name: 'Sign out' })).toBeOnTheScreen();
    expect(screen.getByText('Page content')).toBeOnTheScreen();
  });

  test('an admin sees People and Mail log but not Plans', () => {
    renderShell('admin', '/people');
    expect(screen.getByRole('link', { name: 'People' })).toBeOnTheScreen();
    expect(screen.getByRole('link', { name: 'Mail log' })).toBeOnTheScreen();
    expect(screen.queryByRole('link', { name: 'Plans' })).toBeNull();
  });

  test('a page of another role is not shown', () => {
    renderShell('operator', '/people');
    expect(screen.getByTestId('not-for-role')).toBeOnTheScreen();
    expect(screen.queryByText('Page content')).toBeNull();
  });
});

describe('shell on a phone (bottom tabs)', () => {
  beforeEach(() => setWidth(390));

  test('an operator gets four tabs and More, and no People', () => {
    renderShell('operator');
    const tabs = screen.getAllByRole('link').map((t) => t.props.accessibilityLabel);
    expect(tabs).toEqual(['Floor', 'Alarms', 'Read points', 'Schedule']);
    expect(screen.getByRole('button', { name: 'More' })).toBeOnTheScreen();
    expect(screen.queryByRole('link', { name: 'People' })).toBeNull();
  });

  test("a manager's long names get a short tab word; the link keeps the full name", () => {
    renderShell('manager', '/trends');
    const tabs = screen.getAllByRole('link');
    expect(tabs.map((t) => t.props.accessibilityLabel)).toEqual(['Devices & lots', 'Schedule', 'Lot trends', 'Qualifications']);
    expect(screen.getByText('Lots')).toBeOnTheScreen();
    expect(screen.getByText('Quals')).toBeOnTheScreen();
    expect(screen.queryByText('Devices & lots')).toBeNull();
  });

  test('an engineer finds the rest of their places under More', () => {
    renderShell('engineer', '/plans');
    expect(screen.getAllByRole('link')).toHaveLength(4);
    expect(screen.queryByRole('link', { name: 'Rigs' })).toBeNull();
    fireEvent.press(screen.getByRole('button', { name: 'More' }));
    for (const l of ['Devices & lots', 'Schedule', 'Lot trends', 'Rigs', 'Your account']) {
      expect(screen.getByRole('link', { name: l })).toBeOnTheScreen();
    }
    expect(screen.getByRole('button', { name: 'Sign out' })).toBeOnTheScreen();
  });
});

describe('ShellLayout (session guard)', () => {
  const { ShellLayout } = require('@/components/shell/ShellLayout');
  const { mockFetch } = require('./support/render');

  test('nobody signed in → redirect to sign-in, no navigation drawn', async () => {
    setWidth(1440);
    mockFetch({ 'GET /api/auth/me': { status: 401, body: { error: { code: 'unauthenticated', message: 'Sign in first.' } } } });
    renderWithClient(<ShellLayout />);
    expect(await screen.findByText('Redirect to /sign-in')).toBeOnTheScreen();
    expect(screen.queryByRole('link', { name: 'Floor' })).toBeNull();
  });

  test('signed in → the role navigation and the page', async () => {
    setWidth(1440);
    mockFetch({ 'GET /api/auth/me': { status: 200, body: { user: user('manager') } } });
    renderWithClient(<ShellLayout />);
    expect(await screen.findByRole('link', { name: 'Lot trends' })).toBeOnTheScreen();
    expect(screen.queryByRole('link', { name: 'Floor' })).toBeNull();
    expect(screen.getByText('Page content')).toBeOnTheScreen();
  });
});
