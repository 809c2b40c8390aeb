import { screen } from '@testing-library/react-native';
import { SocketThermal } from '@/components/floor/SocketThermal';
import { thermalFlagText } from '@/components/floor/RigTile';
import { thermalRiseText, tauText } from '@/components/floor/thermal-words';
import type { SocketThermal as SocketThermalBody, ThermalFit } from '@/shared/schemas/thermal';
import { mockFetch, renderWithClient } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const fit = (over: Partial<ThermalFit>): ThermalFit => ({
  identifiedAt: '2026-12-05T02:10:00Z',
  stressClockS: 3600,
  trigger: 'periodic',
  identifiable: true,
  good: true,
  method: 'steady',
  thetaCPerW: 2.0,
  tauS: null,
  tauNote: 'no transient in the window: τ not identifiable',
  offsetC: 0,
  offsetBasis: 'chamber',
  r2: null,
  rmsC: 0.21,
  samples: 20,
  sampleIntervalS: 72,
  meanPowerW: 1.8,
  riseFraction: 0,
  reason: null,
  ...over,
});

const body = (over: Partial<SocketThermalBody>): SocketThermalBody => ({
  rigCode: 'OV-03',
  socketIndex: 2,
  runId: 'r1',
  runCode: 'HOTL-2609-D-2',
  baselineThetaCPerW: 2.5,
  latestGood: null,
  latest: null,
  riseLimitFraction: 0.25,
  flagged: false,
  history: [],
  ...over,
});

describe('socket sheet: Thermal path', () => {
  it('a degrading socket: θ, τ, fit quality, the change against the limit, the flag and the history', async () => {
    const first = fit({ trigger: 'periodic', method: 'arx', thetaCPerW: 2.5, tauS: 118.4, r2: 0.981, rmsC: 0.24, riseFraction: 0 });
    const now = fit({ identifiedAt: '2026-12-05T02:20:00Z', thetaCPerW: 3.4, riseFraction: 0.36 });
    mockFetch({
      'GET /api/thermal/rigs/OV-03/sockets/2': {
        status: 200,
        body: body({ flagged: true, latestGood: now, latest: now, history: [first, now] }),
      },
    });
    renderWithClient(<SocketThermal code="OV-03" socket={2} />);
    expect(await screen.findByTestId('socket-thermal-flag')).toHaveTextContent('Thermal path degrading');
    expect(screen.getByTestId('socket-theta')).toHaveTextContent('θ case–chamber3.4 °C/W');
    expect(screen.getByTestId('socket-tau')).toHaveTextContent('τ (time constant)not identifiable');
    expect(screen.getByTestId('socket-thermal-fit')).toHaveTextContent('FitRMS 0.21 K · steady state, 20 samples');
    expect(screen.getByTestId('socket-thermal-rise')).toHaveTextContent('Change+36 % (flag above +25 %)');
    expect(screen.getByTestId('socket-thermal-history')).toHaveTextContent(/Identifications \(2 stored this run, newest first\)/);
    expect(screen.getByTestId('socket-thermal-history')).toHaveTextContent(/running · θ 2\.5 °C\/W, τ 118 s/);
    expect(screen.getByText(/no substitute for the rig’s hardware interlocks/)).toBeOnTheScreen();
  });

  it('a socket not identifiable yet says why, and shows no flag', async () => {
    const no = fit({
      identifiable: false,
      good: false,
      thetaCPerW: null,
      method: null,
      reason: 'socket power 0.0016 W is too small to heat the case measurably',
      trigger: 'bias-on',
    });
    mockFetch({
      'GET /api/thermal/rigs/OV-03/sockets/1': {
        status: 200,
        body: body({ socketIndex: 1, baselineThetaCPerW: null, latest: no, history: [no] }),
      },
    });
    renderWithClient(<SocketThermal code="OV-03" socket={1} />);
    expect(await screen.findByText('Not identifiable: socket power 0.0016 W is too small to heat the case measurably')).toBeOnTheScreen();
    expect(screen.getByTestId('socket-theta')).toHaveTextContent('θ case–chambernot identified yet');
    expect(screen.queryByTestId('socket-thermal-flag')).toBeNull();
  });

  it('words: the tile’s flag line, τ in s or min, the change', () => {
    expect(thermalFlagText([])).toBe('');
    expect(thermalFlagText([2])).toBe('Thermal path degrading: socket 2');
    expect(thermalFlagText([2, 9])).toBe('Thermal path degrading: sockets 2, 9');
    expect(tauText(118.44)).toBe('118 s');
    expect(tauText(1800)).toBe('30 min');
    expect(thermalRiseText(2.4, 2.5, 0.25)).toBe('−4 % (flag above +25 %)');
  });
});
