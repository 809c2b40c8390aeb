/**
 * Lexend on the web: each weight as a core file and an extension file with CSS `unicode-range`
 * (components/theme/font-subsets.ts), so a first visit downloads only the core files (~10 KB each)
 * and a screen that shows a Greek letter or a maths sign fetches that weight's extension then.
 * expo-font's loader declares one file per family and cannot say `unicode-range`, hence these rules.
 */
import { fontFaceCss, type SplitFace } from '@/components/theme/font-subsets';

export type { SplitFace };

const STYLE_ID = 'emberlot-fonts';

/**
 * A font file's URL. In the web export (and Expo's web dev server) an asset module is its URL, a string;
 * only an asset registered by number needs expo-asset, loaded then, so the first load does without it
 * (~3 KB; tests/unit/web-budget.test.ts).
 */
async function urlOf(asset: SplitFace['core']): Promise<string> {
  if (typeof asset === 'string') return asset;
  const { Asset } = await import('expo-asset');
  return Asset.fromModule(asset).uri;
}

/** Declares the faces once and resolves when every weight's core file is in (document.fonts.load). */
export async function loadSplitFaces(faces: readonly SplitFace[]): Promise<void> {
  if (typeof document === 'undefined') return;
  if (!document.getElementById(STYLE_ID)) {
    const urls = new Map<SplitFace['core'], string>();
    for (const f of faces) for (const a of [f.core, f.extension]) urls.set(a, await urlOf(a));
    if (!document.getElementById(STYLE_ID)) {
      const style = document.createElement('style');
      style.id = STYLE_ID;
      style.textContent = fontFaceCss(faces, (asset) => urls.get(asset)!);
      document.head.appendChild(style);
    }
  }
  // The default sample text (a space) falls in the core range: only the core files load here.
  await Promise.all(faces.map((f) => document.fonts.load(`16px ${JSON.stringify(f.family)}`)));
}
