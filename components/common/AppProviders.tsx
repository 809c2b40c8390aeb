import { useState, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { useFonts } from 'expo-font';
import { StyleSheet, View } from 'react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import Lexend_400Regular from '@/assets/fonts/Lexend_400Regular.woff2';
import Lexend_500Medium from '@/assets/fonts/Lexend_500Medium.woff2';
import Lexend_600SemiBold from '@/assets/fonts/Lexend_600SemiBold.woff2';
import { BrandedLoading } from '@/components/brand/BrandedLoading';
import { endSession } from '@/components/queries/auth';
import { createQueryClient } from '@/components/queries/client';

/**
 * Lexend, subset to the characters the app shows and packed as WOFF2 (scripts/subset-fonts.ts,
 * `npm run fonts`): ~18 KB a face instead of 78 KB of TTF.
 */
const LEXEND = { Lexend_400Regular, Lexend_500Medium, Lexend_600SemiBold };

/** Everything the whole app sits in: one QueryClient, safe areas, and Lexend loaded from the bundle. */
export function AppProviders({ children }: { children: ReactNode }) {
  const [client] = useState(() => createQueryClient({ onSessionEnded: endSession }));
  // A font that fails to load falls back to the system face rather than blocking the app.
  const [loaded, error] = useFonts(LEXEND);
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
