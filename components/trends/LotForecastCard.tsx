import { View } from 'react-native';
import { LOT_VERDICT_LABEL } from '@/shared/domain/verdicts';
import { FORECAST_STATE_LABEL } from '@/shared/forecast/rules';
import type { LotForecast } from '@/shared/schemas/forecast';
import { useLotForecast } from '@/components/queries/forecast';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { QueryState } from '@/components/ui/QueryState';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { CERTAINTY_WORDS, chance } from './forecast-words';
import { hours, sig } from './format';

type Plan = LotForecast['plans'][number];

/** The transformed scale each parameter drifts in (shared/forecast/model.ts). */
const PARAMETER_WORDS = { hfe: ['hFE change', ' %'], icbo: ['ln ICBO ratio', ''], vcesat: ['VCE(sat) shift', ' mV'] } as const;
type Coming = Plan['current']['coming'][number];
type Past = Plan['history'][number];

const comingColumns: Column<Coming>[] = [
  { key: 'h', title: 'Read point', flex: 1, card: 'title', render: (c) => hours(c.hours) },
  { key: 'e', title: 'Devices beyond limits (expected)', flex: 1.4, align: 'right', render: (c) => sig(c.expected) },
  { key: 'i', title: '90 % range', flex: 1, align: 'right', render: (c) => `${c.low}–${c.high}` },
];

const pastColumns: Column<Past>[] = [
  { key: 'h', title: 'After read point', flex: 1, card: 'title', render: (p) => hours(p.hours) },
  {
    key: 'p',
    title: 'Chance of passing',
    flex: 1,
    align: 'right',
    render: (p) => (p.pPass === null ? FORECAST_STATE_LABEL[p.state] : chance(p.pPass)),
  },
  { key: 'f', title: 'Failures then', flex: 0.8, align: 'right', render: (p) => String(p.failures) },
  { key: 'v', title: 'Verdict then', flex: 1, render: (p) => LOT_VERDICT_LABEL[p.verdict] },
];

/**
 * The testIDs of one plan's section: a lot stressed under several plans (HTRB, then temperature
 * cycling) has one section each, so every ID carries the plan's id. Tests find "the section for
 * plan X" by `forecastPlanTestIds(planId)` (or the same strings: `forecast-plan-<planId>` …).
 */
export function forecastPlanTestIds(planId: string) {
  return {
    section: `forecast-plan-${planId}`,
    certainFrom: `forecast-certain-from-${planId}`,
    coming: `forecast-coming-${planId}`,
    history: `forecast-history-${planId}`,
  };
}

function PlanForecast({ plan, many }: { plan: Plan; many: boolean }) {
  const c = plan.current;
  const ids = forecastPlanTestIds(plan.planId);
  return (
    <View style={{ gap: space.sm }} testID={ids.section}>
      {many ? <Text variant="bodyStrong">{plan.planName}</Text> : null}
      <Text>{c.note}</Text>
      <Text variant="caption" testID={ids.certainFrom}>
        {plan.certainFrom
          ? `Certain from ${hours(plan.certainFrom.hours)}: ${plan.certainFrom.side === 'pass' ? 'the lot passes' : 'the lot fails'}.`
          : `Not certain yet (${CERTAINTY_WORDS}).`}
      </Text>
      {c.coming.length ? (
        <DataTable
          caption="Coming read points: devices beyond their limits, failures so far included"
          columns={comingColumns}
          rows={c.coming}
          rowKey={(x) => String(x.hours)}
          testID={ids.coming}
        />
      ) : null}
      {plan.history.length ? (
        <DataTable
          caption="The forecast as it stood after each read point"
          columns={pastColumns}
          rows={plan.history}
          rowKey={(x) => String(x.hours)}
          testID={ids.history}
        />
      ) : null}
      {c.parameters.length ? (
        <Text variant="caption" tone="muted">
          Slopes across the devices:{' '}
          {c.parameters
            .map((p) => {
              const [name, unit] = PARAMETER_WORDS[p.parameter];
              return `${name} mean ${sig(p.mean * 1000)}${unit} per 1000 h, spread ${sig(p.spread * 1000)}${unit} per 1000 h, measurement noise ${sig(p.noise)}${unit}`;
            })
            .join('; ')}
          .
        </Text>
      ) : null}
    </View>
  );
}

/** The lot page's forecast: chance of passing at the plan's end, the coming read points, and how it stood before. */
export function LotForecastCard({ lotId }: { lotId: string }) {
  const q = useLotForecast(lotId);
  return (
    <Card
      title="Forecast"
      description="Where the lot is heading: each device's drift so far extended to the plan's read points, against the plan's failure limits."
    >
      <QueryState query={q} loadingLabel="Forecasting…" errorTitle="Could not forecast this lot">
        {(f) => (
          <View style={{ gap: space.md }} testID="lot-forecast">
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm }}>
              <Text variant="caption" tone="muted">
                Chance of passing
              </Text>
              <Text variant="title" testID="forecast-chance">
                {f.pPass === null ? FORECAST_STATE_LABEL[f.state] : chance(f.pPass)}
              </Text>
              {f.certain ? (
                <StatusPill
                  tone={f.certain === 'pass' ? 'ok' : 'danger'}
                  label={f.certain === 'pass' ? 'Certain to pass' : 'Certain to fail'}
                />
              ) : null}
              {f.asOfH !== null ? (
                <Text variant="caption" tone="muted">
                  after the {hours(f.asOfH)} read point
                </Text>
              ) : null}
            </View>
            {f.plans.map((p) => (
              <PlanForecast key={p.planId} plan={p} many={f.plans.length > 1} />
            ))}
            <Text variant="caption" tone="muted">
              {f.method}
            </Text>
            <Banner tone="info" title="Caution">
              {f.caution}
            </Banner>
          </View>
        )}
      </QueryState>
    </Card>
  );
}
