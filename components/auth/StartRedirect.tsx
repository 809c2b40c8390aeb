import { Redirect, type Href } from 'expo-router';
import { ROLE_HOME } from '@/shared/roles';
import { BrandedLoading } from '@/components/brand/BrandedLoading';
import { Screen } from '@/components/layout/Screen';
import { useMe } from '@/components/queries/auth';
import { ErrorState } from '@/components/ui/ErrorState';

/** "/" sends people to their role's start page, or to sign-in. */
export function StartRedirect() {
  const me = useMe();
  if (me.data === undefined) {
    if (me.isError) {
      return (
        <Screen width="narrow">
          <ErrorState title="Could not check your session" error={me.error} onRetry={() => me.refetch()} retrying={me.isFetching} />
        </Screen>
      );
    }
    return <BrandedLoading />;
  }
  return <Redirect href={me.data ? (ROLE_HOME[me.data.role] as Href) : '/sign-in'} />;
}
