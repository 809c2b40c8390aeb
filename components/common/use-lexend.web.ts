/**
 * Lexend on the web: each weight as a core and an extension file declared with CSS `unicode-range`
 * (web-fonts.ts); waits for the core files only. Native: use-lexend.ts.
 */
import { useEffect, useState } from 'react';
import Lexend_400Regular from '@/assets/fonts/Lexend_400Regular.woff2';
import Lexend_500Medium from '@/assets/fonts/Lexend_500Medium.woff2';
import Lexend_600SemiBold from '@/assets/fonts/Lexend_600SemiBold.woff2';
import Lexend_400RegularExt from '@/assets/fonts/Lexend_400Regular-ext.woff2';
import Lexend_500MediumExt from '@/assets/fonts/Lexend_500Medium-ext.woff2';
import Lexend_600SemiBoldExt from '@/assets/fonts/Lexend_600SemiBold-ext.woff2';
import { fonts } from '@/components/theme/tokens';
import { loadSplitFaces, type SplitFace } from './web-fonts';

const LEXEND_SPLIT: readonly SplitFace[] = [
  { family: fonts.regular, core: Lexend_400Regular, extension: Lexend_400RegularExt },
  { family: fonts.medium, core: Lexend_500Medium, extension: Lexend_500MediumExt },
  { family: fonts.semibold, core: Lexend_600SemiBold, extension: Lexend_600SemiBoldExt },
];

/** [loaded, error] like expo-font's useFonts. */
export function useLexend(): [boolean, Error | null] {
  const [state, setState] = useState<[boolean, Error | null]>([false, null]);
  useEffect(() => {
    let live = true;
    loadSplitFaces(LEXEND_SPLIT).then(
      () => live && setState([true, null]),
      (e: unknown) => live && setState([false, e instanceof Error ? e : new Error(String(e))]),
    );
    return () => {
      live = false;
    };
  }, []);
  return state;
}
