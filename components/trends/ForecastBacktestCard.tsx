import { useState } from 'react';
import { View } from 'react-native';
import type { CalibrationBin } from '@/shared/forecast/backtest';
import { useCan } from '@/components/queries/auth';
import { describeError, isApiError } from '@/components/queries/api';
import { useForecastAlert, useForecastBacktest, useSetForecastAlert } from '@/components/queries/forecast';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { Text } from '@/components/ui/Text';
import { chance } from './forecast-words';
import { sig } from './format';

const binColumns: Column<CalibrationBin>[] = [
  {
    key: 'bin',
    title: 'Forecast chance of passing',
    flex: 1.3,
    card: 'title',
    render: (b) => `${Math.round(b.from * 100)}–${Math.round(b.to * 100)} %`,
  },
  { key: 'n', title: 'Forecasts', flex: 0.8, align: 'right', render: (b) => String(b.forecasts) },
  { key: 'p', title: 'Mean forecast', flex: 1, align: 'right', render: (b) => chance(b.meanPredicted) },
  { key: 'o', title: 'Lots that passed', flex: 1, align: 'right', render: (b) => chance(b.observedPassRate) },
];

/** How well the forecast did on finished lots: calibration by bin and how early it was right. */
export function ForecastBacktestCard() {
  const q = useForecastBacktest();
  return (
    <Card
      title="How good is the forecast?"
      description="Finished lots cut at each earlier read point and forecast again, compared with how they ended (failures within the accept number). Generated lots with a known outcome are added to the lab's own."
    >
      <QueryState query={q} loadingLabel="Back-testing the forecast…" errorTitle="Could not back-test the forecast">
        {(b) => (
          <View style={{ gap: space.sm }} testID="forecast-backtest">
            <DataTable
              caption="Forecast against outcome"
              columns={binColumns}
              rows={b.bins}
              rowKey={(x) => String(x.from)}
              testID="backtest-bins"
            />
            <Text testID="backtest-lead">
              On the right side of 50 % on average {sig(b.meanLeadRightSide, 2)} read points before the last one; certain enough and right{' '}
              {sig(b.meanLeadCertain, 2)} read points before it. Of {b.failedLots} lots that failed, the forecast fell below 50 % before the
              verdict showed the failure in {b.failedTurnedEarlier}.
            </Text>
            <Text variant="caption" tone="muted">
              {b.forecasts} forecasts from {b.sources.databaseLots} finished lots of the lab and {b.sources.generatedLots} generated ones;
              Brier score {sig(b.brier, 2)} (0 is perfect, 0.25 is a coin toss). {b.otherVerdicts} lots ended with another verdict as well
              (drift, sample or completeness), which the forecast does not predict.
            </Text>
          </View>
        )}
      </QueryState>
      <ForecastAlertForm />
    </Card>
  );
}

/** The chance of passing below which engineers are told after a read-point upload (engineers change it, with a reason). */
function ForecastAlertForm() {
  const can = useCan();
  const alert = useForecastAlert();
  const save = useSetForecastAlert();
  const [below, setBelow] = useState('');
  const [reason, setReason] = useState('');
  const current = alert.data?.below;
  // The server's schema (shared/schemas/forecast.ts) checks the values; its field messages show inline.
  const fields = save.error && isApiError(save.error) ? save.error.fieldErrors() : {};
  const submit = () => {
    const n = Number(below.replace(',', '.'));
    save.mutate(
      { below: below.trim() === '' || !Number.isFinite(n) ? Number.NaN : n / 100, reason },
      {
        onSuccess: () => {
          setBelow('');
          setReason('');
        },
      },
    );
  };
  return (
    <View style={{ gap: space.sm, marginTop: space.md }} testID="forecast-alert">
      <Text variant="bodyStrong">
        Lab alert level: engineers who set no level of their own (on their account page) are told when a lot's chance of passing falls below{' '}
        {current === undefined ? '…' : chance(current)} after a read-point upload (once per lot each time it falls below).
      </Text>
      {can('forecast.alert') ? (
        <View style={{ gap: space.sm }}>
          <Field label="Alert below (%)" keyboardType="numeric" value={below} onChangeText={setBelow} error={fields.below} />
          <Field label="Why it changes" value={reason} onChangeText={setReason} error={fields.reason} />
          <Button label="Save the alert level" size="sm" onPress={submit} busy={save.isPending} busyLabel="Saving…" />
          {save.isError && !Object.keys(fields).length ? (
            <Banner tone="danger" title="Not saved">
              {describeError(save.error)}
            </Banner>
          ) : null}
        </View>
      ) : null}
    </View>
  );
}
