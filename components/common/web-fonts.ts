/**
 * Lexend on the web: each weight as a core file and an extension file with CSS `unicode-range`
 * (components/theme/font-subsets.ts), so a first visit downloads only the core files (~13 KB each)
 * and a screen that shows a Greek letter or a maths sign fetches that weight's extension then.
 * expo-font's loader declares one file per family and cannot say `unicode-range`, hence these rules.
 */
import { Asset } from 'expo-asset';
import { fontFaceCss, type SplitFace } from '@/components/theme/font-subsets';

export type { SplitFace };

const STYLE_ID = 'emberlot-fonts';

/** Declares the faces once and resolves when every weight's core file is in (document.fonts.load). */
export async function loadSplitFaces(faces: readonly SplitFace[]): Promise<void> {
  if (typeof document === 'undefined') return;
  if (!document.getElementById(STYLE_ID)) {
    const style = document.createElement('style');
    style.id = STYLE_ID;
    style.textContent = fontFaceCss(faces, (asset) => Asset.fromModule(asset).uri);
    document.head.appendChild(style);
  }
  // The default sample text (a space) falls in the core range: only the core files load here.
  await Promise.all(faces.map((f) => document.fonts.load(`16px ${JSON.stringify(f.family)}`)));
}
