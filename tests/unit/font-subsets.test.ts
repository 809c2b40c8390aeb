/**
 * The two Lexend files per weight split the characters without a gap or an overlap, and the CSS
 * ranges written out in components/theme/font-subsets.ts are the ones the rule computes
 * (CSS Fonts Module Level 4, §4.5 unicode-range: a face is used only for characters in its range).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import {
  CORE_UNICODE_RANGE,
  EXTENSION_UNICODE_RANGE,
  FONT_RANGE_FIRST,
  FONT_RANGE_LAST,
  isCoreCodePoint,
  unicodeRange,
  fontFaceCss,
} from '../../components/theme/font-subsets';

/** Code points covered by a unicode-range value. */
function covered(range: string): Set<number> {
  const out = new Set<number>();
  for (const part of range.split(',')) {
    const [a, b] = part.replace('U+', '').split('-');
    for (let c = parseInt(a, 16); c <= parseInt(b ?? a, 16); c++) out.add(c);
  }
  return out;
}

describe('Lexend core and extension files', () => {
  it('the written-out ranges are the computed ones', () => {
    expect(CORE_UNICODE_RANGE).toBe(unicodeRange(isCoreCodePoint));
    expect(EXTENSION_UNICODE_RANGE).toBe(unicodeRange((c) => !isCoreCodePoint(c)));
  });

  it('core and extension partition U+20–U+FFFF', () => {
    const core = covered(CORE_UNICODE_RANGE);
    const ext = covered(EXTENSION_UNICODE_RANGE);
    for (const c of core) expect(ext.has(c)).toBe(false);
    expect(core.size + ext.size).toBe(FONT_RANGE_LAST - FONT_RANGE_FIRST + 1);
  });

  it('the sign-in screen shows only core characters', () => {
    const text = fs.readFileSync(path.join(__dirname, '../../components/auth/SignInScreen.tsx'), 'utf8');
    const strings = [...text.matchAll(/'([^'\n]*)'/g), ...text.matchAll(/>([^<>{}\n]+)</g)].map((m) => m[1]).join('');
    const outside = [...strings].filter((ch) => ch.codePointAt(0)! >= 0x20 && !isCoreCodePoint(ch.codePointAt(0)!));
    expect(outside).toEqual([]);
  });

  it('declares two faces per family with their ranges', () => {
    const css = fontFaceCss([{ family: 'Lexend_400Regular', core: 1, extension: 2 }], (a) => `/f/${a}.woff2`);
    expect(css.split('\n')).toEqual([
      `@font-face{font-family:"Lexend_400Regular";src:url("/f/1.woff2") format("woff2");unicode-range:${CORE_UNICODE_RANGE};font-display:swap}`,
      `@font-face{font-family:"Lexend_400Regular";src:url("/f/2.woff2") format("woff2");unicode-range:${EXTENSION_UNICODE_RANGE};font-display:swap}`,
    ]);
  });
});
