import { useEffect, useState, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { useFonts } from 'expo-font';
import { Platform, StyleSheet, View } from 'react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import Lexend_400Regular from '@/assets/fonts/Lexend_400Regular.woff2';
import Lexend_500Medium from '@/assets/fonts/Lexend_500Medium.woff2';
import Lexend_600SemiBold from '@/assets/fonts/Lexend_600SemiBold.woff2';
import Lexend_400RegularExt from '@/assets/fonts/Lexend_400Regular-ext.woff2';
import Lexend_500MediumExt from '@/assets/fonts/Lexend_500Medium-ext.woff2';
import Lexend_600SemiBoldExt from '@/assets/fonts/Lexend_600SemiBold-ext.woff2';
import { BrandedLoading } from '@/components/brand/BrandedLoading';
import { endSession } from '@/components/queries/auth';
import { createQueryClient } from '@/components/queries/client';
import { fonts } from '@/components/theme/tokens';
import { loadSplitFaces, type SplitFace } from './web-fonts';

/**
 * Lexend, subset to the characters the app shows and packed as WOFF2 (scripts/subset-fonts.ts,
 * `npm run fonts`): per weight a ~13 KB core file and a ~9 KB extension file instead of 78 KB of TTF.
 * The web declares both with `unicode-range` (web-fonts.ts) and waits for the core files only; native
 * loads the core files (other characters fall back to the system face).
 */
const LEXEND = { Lexend_400Regular, Lexend_500Medium, Lexend_600SemiBold };
const LEXEND_SPLIT: readonly SplitFace[] = [
  { family: fonts.regular, core: Lexend_400Regular, extension: Lexend_400RegularExt },
  { family: fonts.medium, core: Lexend_500Medium, extension: Lexend_500MediumExt },
  { family: fonts.semibold, core: Lexend_600SemiBold, extension: Lexend_600SemiBoldExt },
];

/** [loaded, error] like expo-font's useFonts. */
function useSplitLexend(): [boolean, Error | null] {
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
const useBundledLexend = (): [boolean, Error | null] => useFonts(LEXEND);
const useLexend = Platform.OS === 'web' ? useSplitLexend : useBundledLexend;

/** Everything the whole app sits in: one QueryClient, safe areas, and Lexend loaded from the bundle. */
export function AppProviders({ children }: { children: ReactNode }) {
  const [client] = useState(() => createQueryClient({ onSessionEnded: endSession }));
  // A font that fails to load falls back to the system face rather than blocking the app.
  const [loaded, error] = useLexend();
  return (
    <SafeAreaProvider>
      <QueryClientProvider client={client}>
        {/* The router mounts at once (see ShellFrame); the branded wait only covers it until Lexend is in. */}
        <View style={{ flex: 1 }}>
          {children}
          {loaded || error ? null : (
            <View style={StyleSheet.absoluteFill}>
              <BrandedLoading />
            </View>
          )}
        </View>
      </QueryClientProvider>
    </SafeAreaProvider>
  );
}
