/**
 * The report chart's axis arithmetic (server/modules/reports/chart-scale.ts), the chart layout it
 * gives, the socket ranges of the equipment block, the CSV cells of the report blocks and the ICBO
 * rule's words (one place for the screen and the PDF).
 */
import { clampTo, niceScale, niceStep, placeLabels, tickLabel, yDomain } from '../../server/modules/reports/chart-scale';
import { csvLine } from '../../server/modules/reports/csv';
import { driftChartLayout } from '../../server/modules/reports/drift-chart';
import { socketRanges } from '../../server/modules/reports/reports.service';
import { criteriaWords, icboRuleWords } from '../../shared/domain/criteria-words';
import { deviceDrift } from '../../shared/stats';

describe('nice axis steps [memory: Heckbert, "Nice numbers for graph labels", Graphics Gems 1990; step set 1-2-2.5-5 common practice]', () => {
  it('rounds a raw step up to 1, 2, 2.5 or 5 × 10^k', () => {
    expect([0.7, 1, 1.1, 2.2, 3.55, 6, 12, 240, 0.013].map(niceStep)).toEqual([1, 1, 2, 2.5, 5, 10, 20, 250, 0.02]);
  });

  it('always contains 0, even when every value is below or above it', () => {
    const below = niceScale(-14.2, -3);
    expect(below).toMatchObject({ min: -15, max: 0, step: 5 });
    expect(below.ticks).toEqual([-15, -10, -5, 0]);
    const above = niceScale(1.02, 1.43);
    expect(above.min).toBe(0);
    expect(above.ticks[0]).toBe(0);
    expect(above.ticks[above.ticks.length - 1]).toBeGreaterThanOrEqual(1.43);
  });

  it('ticks cover the data in equal steps without float noise', () => {
    const s = niceScale(0, 1000);
    expect(s.ticks).toEqual([0, 250, 500, 750, 1000]);
    const f = niceScale(-0.3, 0.7, 6);
    expect(f.ticks).toEqual([-0.4, -0.2, 0, 0.2, 0.4, 0.6, 0.8]);
    expect(f.ticks.map(tickLabel)).toEqual(['-0.4', '-0.2', '0', '0.2', '0.4', '0.6', '0.8']);
  });

  it('a flat or empty series still gets an axis', () => {
    expect(niceScale(0, 0).ticks).toEqual([0, 0.25, 0.5, 0.75, 1]);
    expect(niceScale(Number.NaN, Number.NaN)).toMatchObject({ min: 0, max: 1 });
  });
});

describe('clipping [Emberlot choice: an outlier may not flatten the other devices]', () => {
  it('keeps 0 and the limits on the axis and leaves out values beyond 3 limit spans, counting them', () => {
    const d = yDomain([-1, -2.5, 48.6, 1.2], [2]);
    expect(d).toEqual({ lo: -2.5, hi: 2, beyond: 1 });
  });

  it('with no limit nothing is left out', () => {
    expect(yDomain([5, 900], [])).toEqual({ lo: 0, hi: 900, beyond: 0 });
  });

  it('a clipped point is drawn at the edge and says so', () => {
    expect(clampTo(48.6, 0, 2)).toEqual({ v: 2, clipped: true });
    expect(clampTo(-3, -2, 2)).toEqual({ v: -2, clipped: true });
    expect(clampTo(1, 0, 2)).toEqual({ v: 1, clipped: false });
  });

  it('the chart layout puts ±15 % limits and 0 on the y axis and read points up to 1000 h on x', () => {
    const l = driftChartLayout({
      title: 't',
      xLabel: 'h',
      yLabel: '%',
      series: [
        {
          label: 'A1',
          failed: false,
          points: [
            { x: 0, y: 0 },
            { x: 168, y: -0.5 },
            { x: 1000, y: -3 },
          ],
        },
        {
          label: 'A2',
          failed: true,
          points: [
            { x: 0, y: 0 },
            { x: 1000, y: -250 },
          ],
        },
      ],
      limits: [
        { y: 15, label: '+15 %' },
        { y: -15, label: '-15 %' },
      ],
    });
    expect(l.x.ticks).toEqual([0, 250, 500, 750, 1000]);
    expect(l.y.ticks).toContain(0);
    expect(l.y.min).toBeLessThanOrEqual(-15);
    expect(l.y.max).toBeGreaterThanOrEqual(15);
    expect(l.y.min).toBeGreaterThan(-250);
    expect(l.beyond).toBe(1);
  });
});

describe('tick labels stay inside the box (the last x label was clipped on phones)', () => {
  it('moves a label that would cross an edge just inside it and leaves the others centred', () => {
    const lefts = placeLabels(
      [
        { centre: 10, width: 8 },
        { centre: 100, width: 20 },
        { centre: 198, width: 24 },
      ],
      0,
      200,
    );
    expect(lefts).toEqual([6, 90, 176]);
    expect(placeLabels([{ centre: 1, width: 10 }], 0, 200)).toEqual([0]);
  });
});

describe('report blocks', () => {
  it('socket ranges in words', () => {
    expect(socketRanges([3, 0, 1, 2, 7, 9, 10])).toBe('0-3, 7, 9-10');
    expect(socketRanges([])).toBe('-');
  });

  it('a CSV cell from free text that starts like a formula is quoted as text [practice: OWASP CSV injection]', () => {
    expect(csvLine(['A0001', '=HYPERLINK("x")', -2.5, null])).toBe(`A0001,"'=HYPERLINK(""x"")",-2.5,`);
  });
});

describe('the ICBO rule in words agrees with the rule judged (shared/stats deviceDrift)', () => {
  const c = { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 };
  it('says 2× initial or a 200 nA rise, whichever allows more (MIL-PRF-19500 delta limits as the plans state them; common practice)', () => {
    expect(icboRuleWords(c)).toBe('≤ 2× initial, or a rise of up to 200 nA (whichever allows more)');
    expect(criteriaWords(c)).toBe(
      'hFE within ± 15 % of time zero; ICBO ≤ 2× initial, or a rise of up to 200 nA (whichever allows more); VCE(sat) shift ≤ 50 mV',
    );
  });
  it('at both edges of the words the judge agrees: 2× of 300 nA passes, a 200 nA rise from 50 nA passes, beyond either fails', () => {
    const judge = (i0: number, i: number) =>
      deviceDrift({
        timeZero: { hfe: 100, icboA: i0, vcesatV: 0.2 },
        reading: { hfe: 100, icboA: i, vcesatV: 0.2 },
        criteria: c,
        reasons: false,
      }).parameters.find((p) => p.parameter === 'icbo')!.pass;
    expect(judge(300e-9, 600e-9)).toBe(true); // 2× initial
    expect(judge(300e-9, 610e-9)).toBe(false);
    expect(judge(50e-9, 250e-9)).toBe(true); // a rise of 200 nA
    expect(judge(50e-9, 260e-9)).toBe(false);
  });
});
