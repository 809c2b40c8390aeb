/**
 * A chamber on the floor (issue #22): its tile shows the load and air, the programme's step with
 * "cycle n of N" for temperature cycling, the devices loaded and the excursion alarms, and its
 * accessible name says the same; a storage / autoclave vessel shows humidity and pressure; the
 * rig state does not call an unbiased chamber "0 powered". The step rule (shared/domain/chamber-methods.ts).
 */
import { screen } from '@testing-library/react-native';
import { RigTile } from '@/components/floor/RigTile';
import { rigState } from '@/components/floor/rig-state';
import { chamberCautionText, chamberStepText } from '@/components/floor/chamber-words';
import { CHAMBER_CAUTION, chamberStepOf } from '@/shared/domain/chamber-methods';
import type { FloorChamber, FloorTile } from '@/shared/schemas/floor';
import { renderWithClient } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const chamber = (over: Partial<FloorChamber> = {}): FloorChamber => ({
  type: 'cycling',
  minTempC: -70,
  maxPressureKPa: null,
  reportAt: '2026-12-05T02:45:00.000Z',
  airC: 132.5,
  loadC: 131.94,
  setpointC: 132.5,
  humidityPct: null,
  pressureKPa: null,
  doorOpen: false,
  planKind: 'tc',
  step: 'hot',
  cycles: { done: 20, target: 1000 },
  loaded: 45,
  excursionAlarms: 1,
  ...over,
});
const tile = (c: FloorChamber | null, over: Partial<FloorTile> = {}): FloorTile => ({
  rigId: 'r1',
  code: 'TC-01',
  name: 'Cycling chamber 1',
  location: 'Bay D',
  active: true,
  online: true,
  lastSeenAt: '2026-12-05T02:45:00.000Z',
  lastSampleAt: null,
  chamberC: 132.5,
  setpointC: 132.5,
  humidityPct: null,
  maxTempC: 200,
  socketCount: 160,
  powered: 0,
  tripped: 0,
  empty: 115,
  maxCaseC: null,
  openAlarms: 2,
  thermalFlags: [],
  chamber: c,
  run: {
    id: 'run1',
    code: 'TC-2612-C',
    state: 'stressing',
    stressHours: 18.67,
    nextReadPointH: null,
    hoursToNextReadPoint: null,
    nextReadPointEta: null,
  },
  ...over,
});

test('a cycling chamber’s tile: load, air, step with cycle n of N, devices, excursions, in its accessible name too', () => {
  renderWithClient(<RigTile tile={tile(chamber())} />);
  expect(screen.getByTestId('chamber-load-TC-01')).toHaveTextContent('131.9 °C');
  expect(screen.getByTestId('chamber-step-TC-01')).toHaveTextContent('Dwell at the hot extreme · cycle 21 of 1,000');
  expect(screen.getByText('Air 132.5 °C · set 132.5 °C')).toBeOnTheScreen();
  expect(screen.getByText('45')).toBeOnTheScreen();
  expect(screen.queryByText('Powered')).toBeNull(); // no socket counts on a chamber
  const link = screen.getByTestId('rig-tile-TC-01');
  expect(link.props.accessibilityLabel).toBe(
    'Chamber TC-01, Stressing; load 131.9 °C; Air 132.5 °C · set 132.5 °C; Dwell at the hot extreme · cycle 21 of 1,000; ' +
      '45 devices loaded; 1 excursion alarms, 2 open alarms; run TC-2612-C',
  );
});

test('an autoclave vessel shows humidity and pressure; idle without a run', () => {
  const c = chamber({
    type: 'vessel',
    minTempC: null,
    maxPressureKPa: 300,
    airC: 121.02,
    loadC: 120.96,
    setpointC: 121,
    humidityPct: 100,
    pressureKPa: 204.3,
    planKind: null,
    step: 'idle',
    cycles: null,
    loaded: 0,
    excursionAlarms: 0,
  });
  renderWithClient(<RigTile tile={tile(c, { code: 'AC-01', run: null })} />);
  expect(screen.getByText('Air 121.0 °C · set 121.0 °C · 100 % RH · 204 kPa')).toBeOnTheScreen();
  expect(screen.getByTestId('chamber-step-AC-01')).toHaveTextContent('Idle');
  expect(screen.getByText('No run in this chamber')).toBeOnTheScreen();
  expect(chamberCautionText(c)).toBe(CHAMBER_CAUTION.ac);
});

test('an unbiased chamber under stress is "Stressing", not "0 powered"; a board with nothing powered still says so', () => {
  expect(rigState(tile(chamber())).label).toBe('Stressing');
  expect(rigState(tile(null)).label).toBe('Stressing · 0 powered');
});

test('the step: a cycling run’s counter phase, a soak for storage / autoclave, room in a hold; the cycle under way or the cycles done', () => {
  expect(chamberStepOf(null)).toBe('idle');
  expect(chamberStepOf({ state: 'stressing', planKind: 'tc', tcPhase: 'to-cold' })).toBe('to-cold');
  expect(chamberStepOf({ state: 'stressing', planKind: 'tc', tcPhase: null })).toBe('to-hot');
  expect(chamberStepOf({ state: 'heating', planKind: 'ac', tcPhase: null })).toBe('to-soak');
  expect(chamberStepOf({ state: 'stressing', planKind: 'htsl', tcPhase: null })).toBe('soak');
  expect(chamberStepOf({ state: 'read-hold', planKind: 'tc', tcPhase: 'cold' })).toBe('to-room');
  expect(chamberStepOf({ state: 'loading', planKind: 'tc', tcPhase: null })).toBe('idle');
  const held = chamber({ step: 'to-room', cycles: { done: 250, target: 1000 } });
  expect(chamberStepText(held, 'read-hold')).toBe('Back to room temperature · 250 of 1,000 cycles done');
  expect(chamberStepText(chamber({ step: 'cold', cycles: { done: 999, target: 1000 } }), 'stressing')).toBe(
    'Dwell at the cold extreme · cycle 1,000 of 1,000',
  );
});
