/**
 * Lexend ships as two files per weight, split by character (the usual web-font technique: CSS
 * `unicode-range`): a core file with Basic Latin and the few signs every screen shows, and an
 * extension file with the rest of the app's characters (Latin-1's letters, Latin Extended-A, Greek, arrows, maths), which
 * a browser downloads only when a screen shows one of them. scripts/subset-fonts.ts writes both;
 * components/common/web-fonts.ts declares them.
 */

/**
 * Signs outside ASCII that ordinary screens show: from Latin-1 the no-break space, §, °, ±, ², ³, µ, ·, ¹
 * and ×; then dashes, quotes, bullet, ellipsis, arrows, minus, ≤ ≥. Latin-1's accented letters (only in
 * names people type) and the rest of its signs sit in the extension file: they were a third of each
 * core file (~2 KB per weight) that every first visit downloaded (tests/unit/web-budget.test.ts).
 */
const CORE_EXTRA: ReadonlySet<number> = new Set([
  0xa0, 0xa7, 0xb0, 0xb1, 0xb2, 0xb3, 0xb5, 0xb7, 0xb9, 0xd7, 0x2013, 0x2014, 0x2018, 0x2019, 0x201c, 0x201d, 0x2022, 0x2026, 0x2190,
  0x2192, 0x2212, 0x2264, 0x2265,
]);

/** First and last code point the two files split between. */
export const FONT_RANGE_FIRST = 0x20;
export const FONT_RANGE_LAST = 0xffff;

export const isCoreCodePoint = (c: number): boolean => (c >= FONT_RANGE_FIRST && c <= 0x7e) || CORE_EXTRA.has(c);

/** CSS `unicode-range` value of the code points in [FONT_RANGE_FIRST, FONT_RANGE_LAST] for which `inSet` holds. */
export function unicodeRange(inSet: (c: number) => boolean): string {
  const parts: string[] = [];
  const hex = (c: number) => c.toString(16).toUpperCase();
  let start = -1;
  for (let c = FONT_RANGE_FIRST; c <= FONT_RANGE_LAST + 1; c++) {
    const inside = c <= FONT_RANGE_LAST && inSet(c);
    if (inside && start < 0) start = c;
    if (!inside && start >= 0) {
      parts.push(start === c - 1 ? `U+${hex(start)}` : `U+${hex(start)}-${hex(c - 1)}`);
      start = -1;
    }
  }
  return parts.join(',');
}

/** `unicodeRange(isCoreCodePoint)`, written out so the app does not compute it at start-up (tests/unit/font-subsets.test.ts). */
export const CORE_UNICODE_RANGE =
  'U+20-7E,U+A0,U+A7,U+B0-B3,U+B5,U+B7,U+B9,U+D7,U+2013-2014,U+2018-2019,U+201C-201D,U+2022,U+2026,U+2190,U+2192,U+2212,U+2264-2265';
/** `unicodeRange((c) => !isCoreCodePoint(c))`, written out likewise. */
export const EXTENSION_UNICODE_RANGE =
  'U+7F-9F,U+A1-A6,U+A8-AF,U+B4,U+B6,U+B8,U+BA-D6,U+D8-2012,U+2015-2017,U+201A-201B,U+201E-2021,U+2023-2025,U+2027-218F,U+2191,U+2193-2211,U+2213-2263,U+2266-FFFF';

/**
 * One weight: its family name (components/theme/tokens.ts `fonts`) and its two files (asset modules: a
 * number in native bundles, the file's URL in the web export).
 */
export interface SplitFace {
  family: string;
  core: number | string;
  extension: number | string;
}

/** The @font-face rules for the faces (font-display: swap — text shows at once in the fallback face). */
export function fontFaceCss(faces: readonly SplitFace[], uriOf: (asset: number | string) => string): string {
  const rule = (family: string, uri: string, range: string) =>
    `@font-face{font-family:${JSON.stringify(family)};src:url(${JSON.stringify(uri)}) format("woff2");unicode-range:${range};font-display:swap}`;
  return faces
    .flatMap((f) => [rule(f.family, uriOf(f.core), CORE_UNICODE_RANGE), rule(f.family, uriOf(f.extension), EXTENSION_UNICODE_RANGE)])
    .join('\n');
}
