import { useState, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { StyleSheet, View } from 'react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import { BrandedLoading } from '@/components/brand/BrandedLoading';
import { endSession } from '@/components/queries/auth';
import { createQueryClient } from '@/components/queries/client';
import { useLexend } from './use-lexend';

/**
 * Lexend, subset to the characters the app shows and packed as WOFF2 (scripts/subset-fonts.ts,
 * `npm run fonts`): per weight a ~10 KB core file and an ~11 KB extension file instead of 78 KB of TTF.
 * The web declares both with `unicode-range` and waits for the core files only (use-lexend.web.ts);
 * native loads the core files through expo-font (use-lexend.ts; other characters fall back to the
 * system face). Two files, so expo-font stays out of the web's first load.
 */

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
