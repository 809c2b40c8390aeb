/**
 * An engineer's own forecast alert on their account page: follow the lab's level, set a level of
 * their own, or turn the alert off. The server checks the level (shared/schemas/forecast.ts); its
 * field message shows inline.
 */
import { useEffect, useState } from 'react';
import { View } from 'react-native';
import { describeError, isApiError } from '@/components/queries/api';
import { useMyForecastAlert, useSetMyForecastAlert } from '@/components/queries/forecast';
import { chance } from '@/components/trends/forecast-words';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { Loading } from '@/components/ui/Loading';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import type { MyForecastAlert } from '@/shared/schemas/forecast';

type Mode = MyForecastAlert['mode'];

/** What the engineer is told at now, in words. */
function nowWords(a: MyForecastAlert): string {
  if (a.mode === 'off') return 'Your alert is off: you are not told when a lot’s chance of passing falls.';
  if (a.mode === 'own') return `You are told when a lot’s chance of passing falls below your own level of ${chance(a.below)}.`;
  return a.notifyReadPoints
    ? `You follow the lab’s level: you are told when a lot’s chance of passing falls below ${chance(a.labBelow)}.`
    : `You follow the lab’s level of ${chance(a.labBelow)}, but your read-point notices are off, so you are not told. Turn them on above, or set your own level.`;
}

export function ForecastAlertCard() {
  const q = useMyForecastAlert();
  const save = useSetMyForecastAlert();
  const a = q.data;
  const [mode, setMode] = useState<Mode | undefined>(undefined);
  const [level, setLevel] = useState('');
  useEffect(() => {
    if (!a) return;
    setMode(a.mode);
    setLevel(a.below === null ? '' : String(Math.round(a.below * 100)));
  }, [a]);
  const fields = save.error && isApiError(save.error) ? save.error.fieldErrors() : {};
  const submit = () => {
    if (mode === 'own') {
      const n = Number(level.replace(',', '.'));
      save.mutate({ mode, below: level.trim() === '' || !Number.isFinite(n) ? Number.NaN : n / 100 });
    } else if (mode) save.mutate({ mode });
  };
  return (
    <Card
      title="Verdict forecast alert"
      description="After every read-point upload Emberlot forecasts each running lot's chance of passing its plan. You are told (here and by e-mail) when a lot falls below your level: once, and again only if it rises above it and falls once more."
      testID="forecast-alert-mine"
    >
      {!a ? (
        q.isError ? (
          <Banner tone="danger">{describeError(q.error)}</Banner>
        ) : (
          <Loading label="Loading your alert…" />
        )
      ) : (
        <View style={{ gap: space.sm }}>
          <Text testID="forecast-alert-now">{nowWords(a)}</Text>
          <SegmentedChoice<Mode>
            label="Tell me"
            options={[
              { value: 'lab', label: `At the lab's level (${chance(a.labBelow)})` },
              { value: 'own', label: 'At my own level' },
              { value: 'off', label: 'Never' },
            ]}
            value={mode}
            onChange={setMode}
            testID="forecast-alert-mode"
          />
          {mode === 'own' ? (
            <Field
              label="Tell me below (%)"
              help="A chance of passing from 1 to 99 %."
              keyboardType="numeric"
              value={level}
              onChangeText={setLevel}
              error={fields.below}
              testID="forecast-alert-level"
            />
          ) : null}
          <Button label="Save my alert" size="sm" onPress={submit} busy={save.isPending} busyLabel="Saving…" testID="forecast-alert-save" />
          {save.isError && !Object.keys(fields).length ? (
            <Banner tone="danger" title="Not saved">
              {describeError(save.error)}
            </Banner>
          ) : null}
          <Text variant="caption" tone="muted">
            A forecast, not a verdict: the lot's verdict comes from its read points and the plan's accept number.
          </Text>
        </View>
      )}
    </Card>
  );
}
