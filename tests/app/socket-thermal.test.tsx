import { screen } from '@testing-library/react-native';
import { SocketThermal } from '@/components/floor/SocketThermal';
import { thermalFlagText } from '@/components/floor/RigTile';
import { thermalRiseText, tauText, trendOutlookText, trendSlopeText } from '@/components/floor/thermal-words';
import type { SocketThermal as SocketThermalBody, ThermalFit, ThermalTrend } from '@/shared/schemas/thermal';
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
  trend: null,
  trendPoint: false,
  flagRule: null,
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
  flagRule: null,
  trend: null,
  trendMinFits: 10,
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

  const trend = (over: Partial<ThermalTrend>): ThermalTrend => ({
    n: 14,
    spanH: 26.2,
    slopeCPerWPerH: 0.0084,
    lowCPerWPerH: 0.0071,
    highCPerWPerH: 0.0098,
    mkS: 71,
    mkZ: 4.1,
    pValue: 0.00002,
    significant: true,
    limitThetaCPerW: 2.5,
    thetaNowCPerW: 2.2,
    hoursToLimit: 35.7,
    horizonH: 104.8,
    fires: true,
    ...over,
  });

  it('a pad flagged by the trend rule: the rule, the slope with its interval, and when it reaches the line', async () => {
    const now = fit({ thetaCPerW: 2.2, riseFraction: 0.1, trendPoint: true, flagRule: 'trend', trend: trend({}) });
    mockFetch({
      'GET /api/thermal/rigs/OV-03/sockets/2': {
        status: 200,
        body: body({
          baselineThetaCPerW: 2.0,
          flagged: true,
          flagRule: 'trend',
          trend: now.trend,
          latestGood: now,
          latest: now,
          history: [now],
        }),
      },
    });
    renderWithClient(<SocketThermal code="OV-03" socket={2} />);
    expect(await screen.findByTestId('socket-thermal-flag-rule')).toHaveTextContent(
      'Flagged by the trend rule: θ is rising significantly towards the line.',
    );
    expect(screen.getByTestId('socket-thermal-trend')).toHaveTextContent(
      'Trend of θ+0.84 °C/W per 100 h (90 % interval 0.71 to 0.98), 14 fits over 26 h',
    );
    expect(screen.getByTestId('socket-thermal-outlook')).toHaveTextContent(
      'OutlookRising: reaches +25 % in about 36 h (within the 105 h horizon)',
    );
    expect(screen.getByTestId('socket-thermal-rise')).toHaveTextContent('Change+10 % (flag above +25 %)');
  });

  it('before the trend has its fits: says how many it needs; no outlook', async () => {
    const now = fit({});
    mockFetch({
      'GET /api/thermal/rigs/OV-03/sockets/0': {
        status: 200,
        body: body({ socketIndex: 0, baselineThetaCPerW: 2.0, latestGood: now, latest: now, history: [now] }),
      },
    });
    renderWithClient(<SocketThermal code="OV-03" socket={0} />);
    expect(await screen.findByTestId('socket-thermal-trend')).toHaveTextContent('Trend of θafter 10 spaced good fits');
    expect(screen.queryByTestId('socket-thermal-outlook')).toBeNull();
    expect(screen.queryByTestId('socket-thermal-flag-rule')).toBeNull();
  });

  it('trend words: not significant, beyond the horizon, falling', () => {
    expect(trendOutlookText(trend({ significant: false, pValue: 0.31, fires: false }), 0.25)).toBe(
      'No significant rise (Mann–Kendall p 0.31)',
    );
    expect(trendOutlookText(trend({ hoursToLimit: 812, fires: false, horizonH: 500 }), 0.25)).toBe(
      'Rising, but +25 % is about 812 h away (beyond the 500 h horizon)',
    );
    expect(trendOutlookText(trend({ slopeCPerWPerH: -0.001, hoursToLimit: null, fires: false }), 0.25)).toBe('Falling');
    expect(trendSlopeText(trend({ slopeCPerWPerH: -0.0002, lowCPerWPerH: -0.0011, highCPerWPerH: 0.0007 }), 0.9)).toBe(
      '−0.02 °C/W per 100 h (90 % interval −0.11 to 0.07), 14 fits over 26 h',
    );
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
