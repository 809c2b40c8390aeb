import { router } from 'expo-router';
import { Screen } from '@/components/layout/Screen';
import { Button } from '@/components/ui/Button';
import { EmptyState } from '@/components/ui/EmptyState';

export function NotFoundScreen() {
  return (
    <Screen width="narrow">
      <EmptyState
        title="There is no page here"
        message="The address may be mistyped, or the page has moved."
        action={<Button label="Go to your start page" variant="primary" onPress={() => router.replace('/')} />}
      />
    </Screen>
  );
}
