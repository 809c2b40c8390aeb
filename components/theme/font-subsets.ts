/**
 * Lexend ships as two files per weight, split by character (the usual web-font technique: CSS
 * `unicode-range`): a core file with the Latin, Latin-1 and the few signs every screen shows, and an
 * extension file with the rest of the app's characters (Latin Extended-A, Greek, arrows, maths), which
 * a browser downloads only when a screen shows one of them. scripts/subset-fonts.ts writes both;
 * components/common/web-fonts.ts declares them.
 */

/** Signs outside Latin-1 that ordinary screens show: dashes, quotes, bullet, ellipsis, arrows, minus, ≤ ≥. */
const CORE_EXTRA: ReadonlySet<number> = new Set([
  0x2013, 0x2014, 0x2018, 0x2019, 0x201c, 0x201d, 0x2022, 0x2026, 0x2190, 0x2192, 0x2212, 0x2264, 0x2265,
]);

/** First and last code point the two files split between. */
export const FONT_RANGE_FIRST = 0x20;
export const FONT_RANGE_LAST = 0xffff;

export const isCoreCodePoint = (c: number): boolean => (c >= FONT_RANGE_FIRST && c <= 0xff) || CORE_EXTRA.has(c);

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
export const CORE_UNICODE_RANGE = 'U+20-FF,U+2013-2014,U+2018-2019,U+201C-201D,U+2022,U+2026,U+2190,U+2192,U+2212,U+2264-2265';
/** `unicodeRange((c) => !isCoreCodePoint(c))`, written out likewise. */
export const EXTENSION_UNICODE_RANGE =
  'U+100-2012,U+2015-2017,U+201A-201B,U+201E-2021,U+2023-2025,U+2027-218F,U+2191,U+2193-2211,U+2213-2263,U+2266-FFFF';

/** One weight: its family name (components/theme/tokens.ts `fonts`) and its two files (asset modules). */
export interface SplitFace {
  family: string;
  core: number;
  extension: number;
}

/** The @font-face rules for the faces (font-display: swap — text shows at once in the fallback face). */
export function fontFaceCss(faces: readonly SplitFace[], uriOf: (asset: number) => string): string {
  const rule = (family: string, uri: string, range: string) =>
    `@font-face{font-family:${JSON.stringify(family)};src:url(${JSON.stringify(uri)}) format("woff2");unicode-range:${range};font-display:swap}`;
  return faces
    .flatMap((f) => [rule(f.family, uriOf(f.core), CORE_UNICODE_RANGE), rule(f.family, uriOf(f.extension), EXTENSION_UNICODE_RANGE)])
    .join('\n');
}
