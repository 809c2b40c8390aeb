import { useState, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { useFonts } from 'expo-font';
import { Lexend_400Regular } from '@expo-google-fonts/lexend/400Regular';
import { Lexend_500Medium } from '@expo-google-fonts/lexend/500Medium';
import { Lexend_600SemiBold } from '@expo-google-fonts/lexend/600SemiBold';
import { StyleSheet, View } from 'react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import { BrandedLoading } from '@/components/brand/BrandedLoading';
import { endSession } from '@/components/queries/auth';
import { createQueryClient } from '@/components/queries/client';

/** Everything the whole app sits in: one QueryClient, safe areas, and Lexend loaded from the bundle. */
export function AppProviders({ children }: { children: ReactNode }) {
  const [client] = useState(() => createQueryClient({ onSessionEnded: endSession }));
  // A font that fails to load falls back to the system face rather than blocking the app.
  const [loaded, error] = useFonts({ Lexend_400Regular, Lexend_500Medium, Lexend_600SemiBold });
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
