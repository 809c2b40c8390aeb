import { Redirect, Slot, usePathname } from 'expo-router';
import { BrandedLoading } from '@/components/brand/BrandedLoading';
import { Screen } from '@/components/layout/Screen';
import { useMe } from '@/components/queries/auth';
import { ErrorState } from '@/components/ui/ErrorState';
import { ShellFrame } from './ShellFrame';

/** Guards every signed-in page: checks the session, then frames the page in the role's navigation. */
export function ShellLayout() {
  const me = useMe();
  const pathname = usePathname();
  let cover = null;
  if (me.data === undefined) {
    cover = me.isError ? (
      <Screen width="narrow">
        <ErrorState title="Could not check your session" error={me.error} onRetry={() => me.refetch()} retrying={me.isFetching} />
      </Screen>
    ) : (
      <BrandedLoading label="Checking your session…" />
    );
  } else if (me.data === null) {
    cover = <Redirect href="/sign-in" />;
  }
  return (
    <ShellFrame user={me.data ?? null} pathname={pathname} cover={cover}>
      <Slot />
    </ShellFrame>
  );
}
