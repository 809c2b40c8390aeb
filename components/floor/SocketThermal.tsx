import { View } from 'react-native';
import type { ThermalFit } from '@/shared/schemas/thermal';
import { formatDateTime } from '@/components/common/format';
import { useSocketThermal } from '@/components/queries/thermal';
import { space } from '@/components/theme/tokens';
import { Card } from '@/components/ui/Card';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { TREND_INTERVAL_CONFIDENCE } from '@/shared/thermal/rules';
import { thermalFitQuality, thermalRiseText, thetaText, tauText, trendOutlookText, trendSlopeText, TRIGGER_LABEL } from './thermal-words';

/** How many identifications the history lists (newest first). */
const HISTORY_SHOWN = 6;

function Row({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.md }} testID={testID}>
      <Text variant="label" tone="muted">
        {label}
      </Text>
      <Text variant="label" style={{ flexShrink: 1, textAlign: 'right' }}>
        {value}
      </Text>
    </View>
  );
}

function HistoryLine({ f }: { f: ThermalFit }) {
  return (
    <Text variant="caption" tone={f.good ? 'default' : 'muted'}>
      {`${formatDateTime(f.identifiedAt)} · ${TRIGGER_LABEL[f.trigger]} · ${
        f.identifiable
          ? `θ ${thetaText(f.thetaCPerW)}, τ ${tauText(f.tauS)}${f.good ? '' : ' (fit not good enough to use)'}`
          : `not identifiable: ${f.reason}`
      }`}
    </Text>
  );
}

/**
 * The socket's case-to-chamber thermal path as identified from its own telemetry: θ and τ with
 * their fit quality, the run's first value, the degradation flag, and the latest identifications.
 */
export function SocketThermal({ code, socket }: { code: string; socket: number }) {
  const q = useSocketThermal(code, socket);
  const d = q.data;
  const good = d?.latestGood ?? null;
  return (
    <Card
      title="Thermal path"
      description="Case to chamber, identified from this socket’s heat-up and power steps (first-order model, least squares)."
      testID="socket-thermal"
      padding="md"
    >
      {!d ? (
        <Text variant="caption" tone="muted">
          {q.isError ? 'The thermal model could not be read.' : 'Reading the thermal model…'}
        </Text>
      ) : (
        <View style={{ gap: space.xxs }}>
          {d.flagged ? <StatusPill tone="attention" label="Thermal path degrading" testID="socket-thermal-flag" /> : null}
          {d.flagged && d.flagRule ? (
            <Text variant="caption" tone="muted" testID="socket-thermal-flag-rule">
              {d.flagRule === 'trend'
                ? 'Flagged by the trend rule: θ is rising significantly towards the line.'
                : 'Flagged by the step rule: θ is past the line.'}
            </Text>
          ) : null}
          <Row label="θ case–chamber" value={good ? thetaText(good.thetaCPerW) : 'not identified yet'} testID="socket-theta" />
          <Row
            label="τ (time constant)"
            value={good ? (good.tauS !== null ? tauText(good.tauS) : 'not identifiable') : '—'}
            testID="socket-tau"
          />
          {good ? <Row label="Fit" value={thermalFitQuality(good)} testID="socket-thermal-fit" /> : null}
          <Row label="First in this run" value={d.baselineThetaCPerW !== null ? thetaText(d.baselineThetaCPerW) : '—'} />
          {good && d.baselineThetaCPerW !== null ? (
            <Row
              label="Change"
              value={thermalRiseText(good.thetaCPerW, d.baselineThetaCPerW, d.riseLimitFraction)}
              testID="socket-thermal-rise"
            />
          ) : null}
          {d.trend ? (
            <>
              <Row label="Trend of θ" value={trendSlopeText(d.trend, TREND_INTERVAL_CONFIDENCE)} testID="socket-thermal-trend" />
              <Row label="Outlook" value={trendOutlookText(d.trend, d.riseLimitFraction)} testID="socket-thermal-outlook" />
            </>
          ) : d.baselineThetaCPerW !== null ? (
            <Row label="Trend of θ" value={`after ${d.trendMinFits} spaced good fits`} testID="socket-thermal-trend" />
          ) : null}
          {good?.tauS === null && good.tauNote ? (
            <Text variant="caption" tone="muted">
              {good.tauNote}
            </Text>
          ) : null}
          {!good && d.latest && !d.latest.identifiable ? (
            <Text variant="caption" tone="muted">{`Not identifiable: ${d.latest.reason}`}</Text>
          ) : null}
          {d.history.length ? (
            <View style={{ gap: 2, marginTop: space.xs }} testID="socket-thermal-history">
              <Text variant="overline" tone="subtle">
                {`Identifications (${d.history.length} stored this run, newest first)`}
              </Text>
              {d.history
                .slice(-HISTORY_SHOWN)
                .reverse()
                .map((f) => (
                  <HistoryLine key={`${f.identifiedAt}-${f.trigger}`} f={f} />
                ))}
            </View>
          ) : null}
          <Text variant="caption" tone="muted">
            {d.flagged ? 'Check the heat sinking when the oven can be opened safely. ' : ''}
            This flag is software: no substitute for the rig’s hardware interlocks. Follow the lab’s safety rules.
          </Text>
        </View>
      )}
    </Card>
  );
}
