/** Polarity by device class (issue #23 item 10): one table; the form offers it and the API enforces it. */
import { impliedPolarity, POLARITIES, POLARITIES_BY_KIND, polarityFits } from '../../shared/domain/devices';
import { deviceTypeCreateSchema } from '../../shared/schemas/devices';

// Common practice: bipolar transistors are NPN or PNP, MOSFETs N- or P-channel; a rectifier diode has no polarity to choose.
describe('polarity by device class', () => {
  it.each([
    ['bjt', ['NPN', 'PNP']],
    ['mosfet', ['N-channel', 'P-channel']],
    ['diode', ['rectifier']],
  ] as const)('%s offers %j', (kind, expected) => {
    expect(POLARITIES_BY_KIND[kind]).toEqual(expected);
    for (const p of POLARITIES) expect(polarityFits(kind, p)).toBe((expected as readonly string[]).includes(p));
  });
  it('only a rectifier has its polarity implied', () => {
    expect([impliedPolarity('bjt'), impliedPolarity('mosfet'), impliedPolarity('diode')]).toEqual([undefined, undefined, 'rectifier']);
  });
  it('the schema refuses a polarity that does not fit the class, naming what fits', () => {
    const ratings = {
      partNumber: 'HPD-2N140',
      bvcboV: 200,
      bveboV: 6,
      icMaxA: 2,
      pMaxW: 20,
      tjMaxC: 150,
      thetaJcCPerW: 6.25,
      thetaJaCPerW: 70,
      betaRef: 100,
      betaRefIcA: 0.5,
    };
    const bad = deviceTypeCreateSchema.safeParse({ ...ratings, kind: 'bjt', polarity: 'N-channel' });
    expect(bad.success).toBe(false);
    expect(bad.error?.issues.map((i) => [i.path.join('.'), i.message])).toEqual([
      ['polarity', 'A Bipolar (BJT) part is NPN or PNP; N-channel does not fit it'],
    ]);
    expect(deviceTypeCreateSchema.safeParse({ ...ratings, kind: 'diode', polarity: 'NPN' }).error?.issues[0].message).toBe(
      'A diode (rectifier) has no polarity to choose (rectifier); NPN does not fit it',
    );
    expect(deviceTypeCreateSchema.safeParse({ ...ratings, kind: 'bjt', polarity: 'PNP' }).success).toBe(true);
  });
});
