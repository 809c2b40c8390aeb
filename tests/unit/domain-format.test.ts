/** shared/domain/format.ts: the one date style and the quantity wording. */
import { formatLocal, formatUtc, grouped, sigFigures, withSiPrefix } from '../../shared/domain/format';

describe('dates: "YYYY-MM-DD HH:MM", UTC on the server with its suffix, local on screens', () => {
  it('formats UTC the way scheduling messages always have (tests/unit/scheduling.test.ts)', () => {
    expect(formatUtc(Date.UTC(2026, 2, 3, 8, 0))).toBe('2026-03-03 08:00 UTC');
    expect(formatUtc(new Date(Date.UTC(2099, 0, 1, 12, 0, 59)))).toBe('2099-01-01 12:00 UTC');
    expect(formatUtc('2026-12-31T23:59:00.000Z')).toBe('2026-12-31 23:59 UTC');
  });

  it('formats local time in the same layout, without a zone suffix', () => {
    expect(formatLocal(new Date(2026, 2, 2, 8, 5))).toBe('2026-03-02 08:05');
    expect(formatLocal(new Date(2031, 10, 9, 17, 0).getTime())).toBe('2031-11-09 17:00');
  });
});

describe('quantities', () => {
  it('three significant figures without float noise', () => {
    expect(sigFigures(0.1 + 0.2)).toBe('0.3');
    expect(sigFigures(40.5523)).toBe('40.6');
    expect(sigFigures(0)).toBe('0');
    expect(sigFigures(Infinity)).toBe('Infinity');
  });

  it('SI prefixes where they help', () => {
    expect(withSiPrefix(2.5e-4, 'A')).toBe('250 µA');
    expect(withSiPrefix(1.169e-1, 'W')).toBe('117 mW'); // 116.9 mW: the JESD51 derating check in the reference list, to 3 figures
    expect(withSiPrefix(2e-8, 'A')).toBe('20 nA');
    expect(withSiPrefix(12, 'V')).toBe('12 V');
  });

  it('groups thousands', () => {
    expect(grouped(15000)).toBe('15,000');
    expect(grouped(999)).toBe('999');
  });
});
