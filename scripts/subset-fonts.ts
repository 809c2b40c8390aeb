/**
 * `npm run fonts`: the app's Lexend faces as WOFF2 holding only the characters Emberlot shows —
 * Latin (Basic, Latin-1, Extended-A), the punctuation, arrows, Greek and maths signs of the trade
 * (°, µ, Ω, ±, −, ≤, ≥, β, θ, Δ…) and every character in the app's own source. A character outside the
 * set still shows, in the system face (browsers fall back per character). The three faces drop from
 * 3 × 78 KB of TTF to a fraction of that on the wire, each in a core and an extension file
 * (components/theme/font-subsets.ts); the output is committed (assets/fonts) so no
 * install or export step needs this script's WebAssembly.
 * Source: @expo-google-fonts/lexend (SIL Open Font License 1.1, which permits subsetting; LICENSE beside
 * the output).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import subsetFont from 'subset-font';
import { isCoreCodePoint } from '../components/theme/font-subsets';

const ROOT = path.join(__dirname, '..');
const FACES = ['400Regular', '500Medium', '600SemiBold'] as const;
export const FONT_DIR = path.join(ROOT, 'assets', 'fonts');

const ranges: Array<[number, number]> = [
  [0x20, 0x7e], // Basic Latin
  [0xa0, 0x17f], // Latin-1 Supplement, Latin Extended-A
  [0x391, 0x3c9], // Greek (β, θ, σ, Δ, Ω …)
  [0x2010, 0x2027], // dashes, quotes, bullet, ellipsis
  [0x2030, 0x203a], // per mille, primes, angle quotes
  [0x2190, 0x2195], // arrows
  [0x2212, 0x2215], // minus, division slash
];
const singles = [0x2044, 0x20ac, 0x2122, 0x2126, 0x2248, 0x2260, 0x2264, 0x2265, 0x221e, 0x2713, 0x2717, 0x25b2, 0x25bc, 0x25cf];

/** Every character in the app's own source (labels, units, symbols). */
function sourceCharacters(): Set<number> {
  const out = new Set<number>();
  const walk = (p: string) => {
    const st = fs.statSync(p);
    if (st.isDirectory()) for (const f of fs.readdirSync(p)) walk(path.join(p, f));
    else if (/\.(tsx?|json)$/.test(p)) for (const ch of fs.readFileSync(p, 'utf8')) out.add(ch.codePointAt(0)!);
  };
  for (const d of ['app', 'components', 'shared']) walk(path.join(ROOT, d));
  return out;
}

export function fontText(): string {
  const cps = sourceCharacters();
  for (const [a, b] of ranges) for (let c = a; c <= b; c++) cps.add(c);
  for (const c of singles) cps.add(c);
  return [...cps]
    .filter((c) => c >= 0x20)
    .sort((a, b) => a - b)
    .map((c) => String.fromCodePoint(c))
    .join('');
}

async function main(): Promise<void> {
  const text = fontText();
  const pkg = path.dirname(require.resolve('@expo-google-fonts/lexend/package.json'));
  fs.mkdirSync(FONT_DIR, { recursive: true });
  // Two files per weight, split by character (components/theme/font-subsets.ts): the core one loads
  // with every screen, the extension only when a screen shows one of its characters.
  const core = [...text].filter((ch) => isCoreCodePoint(ch.codePointAt(0)!)).join('');
  const extension = [...text].filter((ch) => !isCoreCodePoint(ch.codePointAt(0)!)).join('');
  for (const face of FACES) {
    const ttf = fs.readFileSync(path.join(pkg, face, `Lexend_${face}.ttf`));
    for (const [suffix, chars] of [
      ['', core],
      ['-ext', extension],
    ] as const) {
      const woff2 = await subsetFont(ttf, chars, { targetFormat: 'woff2' });
      fs.writeFileSync(path.join(FONT_DIR, `Lexend_${face}${suffix}.woff2`), woff2);
      console.log(`[fonts] Lexend ${face}${suffix}: ${ttf.length} B TTF → ${woff2.length} B WOFF2 (${[...chars].length} characters)`);
    }
  }
  fs.copyFileSync(path.join(pkg, 'LICENSE_FONT'), path.join(FONT_DIR, 'LICENSE-Lexend-OFL.txt'));
}

if (require.main === module)
  main().catch((e) => {
    console.error(e);
    process.exit(1);
  });
