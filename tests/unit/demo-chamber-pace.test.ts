/**
 * The demo's cycling chamber pace (scripts/demo-fleet.ts): at 4 chamber minutes per wall second and
 * a report every 0.4 s (1.6 chamber minutes), the server's counter (shared/chamber/profile.ts,
 * which needs two consecutive reports inside an extreme's band for the whole dwell) counts every
 * programme cycle the simulated chamber (rig-simulator/chamber.ts) completes. At the ovens' 1 h per
 * wall second a whole 10 min dwell would fall between two reports and nothing would ever count.
 * Profile: JESD22-A104 condition B −55/+125 °C [memory], 10 min dwell, 10 K/min [practice].
 */
import { initialChamberState, stepChamber, type ChamberModelConfig, type ChamberState } from '../../rig-simulator/chamber';
import { DEMO_CYCLING_CHAMBER_PACE } from '../../scripts/demo-fleet';
import { newTcCounter, stepTcCounter, type TcProfile } from '../../shared/chamber/profile';

const PROFILE: TcProfile = { lowC: -55, highC: 125, dwellMin: 10, rampKPerMin: 10, cycles: 1000 };
const CFG: ChamberModelConfig = {
  maxRampKPerMin: 15,
  tauMin: 3,
  minTempC: -70,
  maxTempC: 200,
  humidityCapable: false,
  pressureVessel: false,
};

function run(minutesPerReport: number, reports: number) {
  let s: ChamberState = { ...initialChamberState(), profile: { ...PROFILE } };
  let counter = newTcCounter();
  for (let k = 0; k < reports; k++) {
    for (let j = 0; j < 4; j++) s = stepChamber(s, CFG, minutesPerReport / 4); // the simulator's 4 substeps
    counter = stepTcCounter(PROFILE, counter, s.clockMin, s.loadC).state;
  }
  return { programme: s.programCycles, counted: counter.cycles, minutes: s.clockMin };
}

test('the demo pace: every programme cycle is counted, about 16 wall seconds each', () => {
  const perReport = DEMO_CYCLING_CHAMBER_PACE.minutesPerWallSecond * DEMO_CYCLING_CHAMBER_PACE.samplePeriodWallS;
  expect(perReport).toBeCloseTo(1.6, 9);
  const r = run(perReport, 2000);
  expect(r.programme).toBeGreaterThanOrEqual(40);
  expect(r.counted).toBeGreaterThanOrEqual(r.programme - 1);
  expect(r.counted).toBeLessThanOrEqual(r.programme);
  const wallSPerCycle = r.minutes / r.programme / DEMO_CYCLING_CHAMBER_PACE.minutesPerWallSecond;
  expect(wallSPerCycle).toBeGreaterThan(12);
  expect(wallSPerCycle).toBeLessThan(20);
});

test('at the ovens’ pace (30 chamber minutes between reports) no cycle would count', () => {
  const r = run(30, 200);
  expect(r.programme).toBeGreaterThan(0);
  expect(r.counted).toBe(0);
});
