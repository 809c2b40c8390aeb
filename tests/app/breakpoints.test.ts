import { getBreakpoints } from '@/components/theme/breakpoints';

// Thresholds are Emberlot's own design choices (common practice: 600 / 1024 / 1440).
describe('getBreakpoints', () => {
  test.each([
    [0, 'phone', false, false, false],
    [320, 'phone', false, false, false],
    [390, 'phone', false, false, false],
    [599, 'phone', false, false, false],
    [600, 'tablet', true, false, false],
    [768, 'tablet', true, false, false],
    [1023, 'tablet', true, false, false],
    [1024, 'desktop', true, true, false],
    [1280, 'desktop', true, true, false],
    [1439, 'desktop', true, true, false],
    [1440, 'wide', true, true, true],
    [2560, 'wide', true, true, true],
  ])('%i px → %s', (width, name, gtPhone, gtTablet, gtDesktop) => {
    expect(getBreakpoints(width)).toEqual({ width, name, gtPhone, gtTablet, gtDesktop });
  });

  test('a nonsense width counts as the narrowest phone', () => {
    expect(getBreakpoints(Number.NaN).name).toBe('phone');
    expect(getBreakpoints(-5).width).toBe(0);
  });
});
