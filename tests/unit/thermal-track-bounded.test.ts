/**
 * SocketThermalTrack (shared/thermal/track.ts) keeps one socket's state for the whole run, and the
 * server's tracker keeps one per socket of every active run: what it holds must not grow with the
 * run's length. Fed a long run of a first-order thermal path (τ·dTc/dt = Ta + θ·P − Tc, exact
 * discretisation for power held over each 1 s step — common practice) with bias switched off and
 * on and power steps, it holds at most windowSamples + 3 × offSamples + BASELINE_AGREE_FITS values
 * at every sample, and it still identifies (so the bound is not that of an idle track). The fits'
 * accuracy is tests/unit/thermal-identify.test.ts's business, not this file's.
 */
import { BASELINE_AGREE_FITS, DEFAULT_TRACK_OPTIONS, SocketThermalTrack } from '../../shared/thermal';
import { mulberry32 } from '../../shared/random';

test('a 20,000-sample run: held values stay within the options’ bound, fits keep coming', () => {
  const o = DEFAULT_TRACK_OPTIONS;
  const bound = o.windowSamples + 3 * o.offSamples + BASELINE_AGREE_FITS;
  const track = new SocketThermalTrack();
  const rand = mulberry32(7);
  const thetaCPerW = 2;
  const a = Math.exp(-1 / 120); // τ 120 s, h 1 s
  const ambientC = 125;
  let caseC = ambientC;
  let fits = 0;
  let peak = 0;
  for (let t = 1; t <= 20_000; t++) {
    const biasOn = t % 1_000 >= 100; // off for 100 s of every 1,000
    const powerW = biasOn ? (Math.floor(t / 250) % 2 === 0 ? 4 : 6) : 0; // a power step every 250 s
    caseC = ambientC + a * (caseC - ambientC) + (1 - a) * thetaCPerW * powerW;
    const e = track.push({ tS: t, caseC: caseC + (rand() - 0.5) * 0.1, ambientC, powerW, biasOn });
    if (e) fits++;
    peak = Math.max(peak, track.heldValues);
  }
  expect(peak).toBeLessThanOrEqual(bound);
  expect(peak).toBeGreaterThanOrEqual(o.windowSamples); // the window did fill
  expect(fits).toBeGreaterThan(1_000); // a periodic fit every periodicSamples while bias is on
  expect(track.latestGood).not.toBeNull();
});
