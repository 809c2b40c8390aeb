import { useState } from 'react';
import { View } from 'react-native';
import { ROLE_LABEL } from '@/shared/roles';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan, useMe, useSignOut } from '@/components/queries/auth';
import { useUpdateUser } from '@/components/queries/users';
import { colors, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Loading } from '@/components/ui/Loading';
import { Text } from '@/components/ui/Text';
import { Toggle } from '@/components/ui/Toggle';
import { ForecastAlertCard } from './ForecastAlertCard';

type Flag = 'notifyAlarms' | 'notifyReadPoints';

/** The signed-in person's own page: who they are, which e-mails they get, sign-out. */
export function AccountScreen() {
  const me = useMe();
  const update = useUpdateUser();
  const signOut = useSignOut();
  const can = useCan();
  const [saving, setSaving] = useState<Flag | null>(null);
  const user = me.data;

  if (!user)
    return (
      <Screen width="narrow">
        <Loading label="Loading your account…" />
      </Screen>
    );

  const set = (flag: Flag, value: boolean) => {
    setSaving(flag);
    update.mutate({ id: user.id, patch: { [flag]: value } }, { onSettled: () => setSaving(null) });
  };
  const unknown = user.notifyAlarms === undefined || user.notifyReadPoints === undefined;

  return (
    <Screen width="narrow" testID="account-screen">
      <Header title="Your account" subtitle="Your details and the e-mails Emberlot sends you." />
      <Card title="Signed in as">
        <View style={{ gap: space.xs }}>
          <Row label="Name" value={user.name} />
          <Row label="E-mail" value={user.email} />
          <Row label="Role" value={ROLE_LABEL[user.role]} />
        </View>
        <Text variant="caption" tone="subtle">
          To change your name, e-mail or role, ask an administrator.
        </Text>
      </Card>
      <Card title="E-mail notifications" description="Sent to your address above. Alarms always show on the floor, e-mail or not.">
        {unknown ? <Banner tone="info">Your current choices could not be read. Switching one on or off saves it.</Banner> : null}
        {update.isError ? (
          <Banner tone="danger" title="Not saved">
            {describeError(update.error)}
          </Banner>
        ) : null}
        <Toggle
          label="Alarms"
          help="A rig trips, a socket runs away, a run stops unexpectedly."
          value={user.notifyAlarms}
          onChange={(v) => set('notifyAlarms', v)}
          busy={saving === 'notifyAlarms'}
          disabled={saving !== null && saving !== 'notifyAlarms'}
          testID="toggle-notify-alarms"
        />
        <View style={{ height: 1, backgroundColor: colors.border }} />
        <Toggle
          label="Read points due"
          help="A run reaches a read point and devices wait to be measured."
          value={user.notifyReadPoints}
          onChange={(v) => set('notifyReadPoints', v)}
          busy={saving === 'notifyReadPoints'}
          disabled={saving !== null && saving !== 'notifyReadPoints'}
          testID="toggle-notify-read-points"
        />
      </Card>
      {can('forecast.alert.own') ? <ForecastAlertCard /> : null}
      <Card title="Sign out" description="Ends your session on this device.">
        {signOut.isError ? <Banner tone="danger">{describeError(signOut.error)}</Banner> : null}
        <Button label="Sign out" onPress={() => signOut.mutate()} busy={signOut.isPending} busyLabel="Signing out…" />
      </Card>
    </Screen>
  );
}

function Row({ label, value }: { label: string; value: string }) {
  return (
    <View style={{ flexDirection: 'row', gap: space.md }}>
      <Text variant="label" tone="subtle" style={{ width: 72 }}>
        {label}
      </Text>
      <Text variant="body" style={{ flex: 1 }}>
        {value}
      </Text>
    </View>
  );
}
