import { TEMP_BANDS, bandFor } from '@/components/floor/temp-scale';
import { colors, tones } from '@/components/theme/tokens';

/**
 * Contrast ratio and relative luminance as defined by WCAG 2.1 (W3C Recommendation, "relative
 * luminance" and "contrast ratio" in its glossary; success criterion 1.4.3 asks ≥ 4.5:1 for normal
 * text). The socket board prints each socket's temperature on its band's fill at 13 px.
 */
function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5]
    .map((i) => parseInt(hex.slice(i, i + 2), 16) / 255)
    .map((c) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}
function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
  return (hi + 0.05) / (lo + 0.05);
}

describe('the case-temperature scale of the socket board', () => {
  test('the WCAG formula itself: black on white is 21:1, a colour on itself 1:1', () => {
    expect(contrast('#000000', '#FFFFFF')).toBeCloseTo(21, 6);
    expect(contrast('#C2461A', '#C2461A')).toBeCloseTo(1, 9);
  });

  test.each(TEMP_BANDS.map((b) => [b.label, b.fill, b.ink]))('band %s: its ink on its fill passes 4.5:1', (_label, fill, ink) => {
    expect(contrast(fill, ink)).toBeGreaterThanOrEqual(4.5);
  });

  test('lightness falls band by band, so the order survives greyscale and colour-vision deficiencies', () => {
    const l = TEMP_BANDS.map((b) => luminance(b.fill));
    for (let k = 1; k < l.length; k++) expect(l[k]).toBeLessThan(l[k - 1]);
  });

  test('bands cover every temperature without gaps', () => {
    for (let k = 1; k < TEMP_BANDS.length; k++) expect(TEMP_BANDS[k].from).toBe(TEMP_BANDS[k - 1].to);
    expect(bandFor(150)?.label).toBe('140–160');
    expect(bandFor(null)).toBeNull();
  });

  test('status tones: the foreground passes 4.5:1 on its own background and on paper', () => {
    for (const t of Object.values(tones)) {
      expect(contrast(t.fg, t.bg)).toBeGreaterThanOrEqual(4.5);
      expect(contrast(t.fg, colors.paper)).toBeGreaterThanOrEqual(4.5);
    }
  });
});
