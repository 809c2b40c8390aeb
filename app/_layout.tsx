import { Stack } from 'expo-router';
import { AppProviders } from '@/components/common/AppProviders';
import { colors } from '@/components/theme/tokens';

export default function RootLayout() {
  return (
    <AppProviders>
      <Stack screenOptions={{ headerShown: false, title: 'Emberlot', contentStyle: { backgroundColor: colors.paper } }} />
    </AppProviders>
  );
}
