/**
 * The hard trip of a stress planned at the rating: an HTRB at Tj max with a +5/−0 K band holds every
 * junction at 150–155 °C on purpose, so protection trips at the band's top + 5 K (protectionLimitC,
 * Emberlot's rule) and names both the run's limit and the part's rating; a powered stress keeps Tj max.
 */
import { RATED_STRESS_HEADROOM_K, protectionLimitC } from '../../../shared/domain/standards';
import { assessSocket, type SocketSample } from '../../../shared/safety';

const HTRB_BAND = { belowK: 0, aboveK: 5 };

/** A steady reverse-biased socket: 60 samples a second apart at one junction temperature, leakage in µA. */
const steady = (tjC: number): SocketSample[] =>
  Array.from({ length: 60 }, (_, k) => ({ tS: k, caseC: tjC, vV: 560, iA: 2e-6, chamberC: 152.5, biasOn: true }));

describe('protectionLimitC', () => {
  it('raises the limit of an HTRB at rating to the band top + headroom', () => {
    expect(RATED_STRESS_HEADROOM_K).toBe(5);
    expect(protectionLimitC({ tjMaxC: 150, reverseBias: true, chamberC: 150, band: HTRB_BAND })).toBe(160);
  });
  it('keeps Tj max when the band stays below it, and always for powered stress', () => {
    expect(protectionLimitC({ tjMaxC: 150, reverseBias: true, chamberC: 125, band: HTRB_BAND })).toBe(150);
    expect(protectionLimitC({ tjMaxC: 150, reverseBias: false, chamberC: 150, band: HTRB_BAND })).toBe(150);
  });
});

describe('the judge with a run limit above the rating', () => {
  const rated = { tjMaxC: 150, thetaJcCPerW: 1.5, thetaJaCPerW: 62 };
  const atRating = { ...rated, tjMaxC: 160, ratedTjMaxC: 150 };

  it('a steady socket at 153 °C trips on the data sheet limit but not on the run limit', () => {
    expect(assessSocket(steady(153), rated).action).toBe('trip');
    expect(assessSocket(steady(153), atRating).action).toBe('none');
  });

  it('a socket at the run limit trips, naming the limit and the rating', () => {
    const r = assessSocket(steady(160.5), atRating);
    expect(r.action).toBe('trip');
    expect(r.reason).toContain('run limit 160.0 °C');
    expect(r.reason).toContain('rated 150.0 °C');
  });
});
