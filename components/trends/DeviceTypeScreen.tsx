import { useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useState } from 'react';
import { Pressable, View } from 'react-native';
import type { PlanAcceleration } from '@/shared/schemas/analytics';
import { MECHANISM_LABEL, describeParameters } from '@/shared/reliability/mechanism-names';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useDeviceTypeSummary } from '@/components/queries/analytics';
import { colors, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { sig } from './format';
import { VerdictPill } from './verdict';
import { countOf } from '@/shared/domain/format';

const LTPDS = ['1', '2', '3', '5', '10'] as const;
const ACCEPTS = ['0', '1', '2'] as const;

const accColumns: Column<PlanAcceleration>[] = [
  { key: 'plan', title: 'Plan', flex: 2, card: 'title', render: (a) => a.planName },
  {
    key: 'cond',
    title: 'Mechanism · Ea · use → mean Tj',
    flex: 1.6,
    render: (a) =>
      `${MECHANISM_LABEL[a.mechanism]} · ${a.eaEv} eV · ${a.useC} → ${sig(a.stressC, 4)} °C (${a.stressBasis.startsWith('estimated') ? 'junction' : 'chamber'})`,
  },
  { key: 'af', title: 'Acceleration', flex: 0.9, align: 'right', render: (a) => `${sig(a.accelerationFactor)}×` },
  { key: 'dh', title: 'Device-hours', flex: 1, align: 'right', render: (a) => Math.round(a.deviceHours).toLocaleString('en-GB') },
  {
    key: 'eq',
    title: 'At use conditions',
    flex: 1.1,
    align: 'right',
    render: (a) => Math.round(a.equivalentDeviceHours).toLocaleString('en-GB'),
  },
  { key: 'f', title: 'Failures', flex: 0.7, align: 'right', render: (a) => String(a.failures) },
];

/** A part number's record: lots passed, device-hours, acceleration, FIT and the next sample size. */
export function DeviceTypeScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const router = useRouter();
  const [ltpd, setLtpd] = useState<(typeof LTPDS)[number]>('3');
  const [accept, setAccept] = useState<(typeof ACCEPTS)[number]>('0');
  const summary = useDeviceTypeSummary(id, { ltpdPct: Number(ltpd), acceptNumber: Number(accept) });

  return (
    <Screen width="wide" testID="device-type-summary-screen">
      <QueryState query={summary} loadingLabel="Adding up device-hours…" errorTitle="Could not load this device type">
        {(t) => (
          <View style={{ gap: space.lg }}>
            <Header eyebrow="Device type" title={t.partNumber} subtitle={t.description} />
            <Button
              size="sm"
              variant="quiet"
              label="‹ Lot trends"
              onPress={() => (router.canGoBack() ? router.back() : router.replace('/trends' as Href))}
            />
            <Card title="Record">
              <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
                {[
                  ['Lots passed', `${t.lotsPassed} of ${t.lots}`],
                  ['Devices tested', t.devicesTested.toLocaleString('en-GB')],
                  ['Device-hours', Math.round(t.deviceHours).toLocaleString('en-GB')],
                  ['Failures', String(t.failures)],
                ].map(([k, v]) => (
                  <View key={k}>
                    <Text variant="caption" tone="muted">
                      {k}
                    </Text>
                    <Text variant="title">{v}</Text>
                  </View>
                ))}
              </View>
              {t.mechanisms.map((m) => (
                <View key={m.mechanism} style={{ gap: space.xs }} testID={`mechanism-${m.mechanism}`}>
                  <Text variant="label">
                    {m.label}: {m.fit60 === null ? '—' : sig(m.fit60)} FIT at 60 %, {m.fit90 === null ? '—' : sig(m.fit90)} at 90 %
                  </Text>
                  <Text variant="caption" tone="muted">
                    {m.unavailable ??
                      `${countOf(m.failures, 'failure')}, ${Math.round(m.equivalentDeviceHours).toLocaleString('en-GB')} equivalent device-hours at use conditions from ${countOf(m.plans, 'plan')}. ${m.model}; ${describeParameters(m.parameters)}.`}
                  </Text>
                </View>
              ))}
              <Text variant="caption" tone="muted">
                One FIT per failure mechanism, never pooled: χ²(confidence; 2r + 2) / (2 · Σ equivalent device-hours) × 10⁹ (JESD85), each
                device credited at its junction estimated from its socket&apos;s telemetry. k = {t.constants.boltzmannEvPerK} eV/K (
                {t.constants.source}), T(K) = T(°C) + {t.constants.kelvinOffset}.
              </Text>
            </Card>
            {t.accelerations.length ? (
              <DataTable caption="Acceleration per plan" columns={accColumns} rows={t.accelerations} rowKey={(a) => a.planId} />
            ) : (
              <Banner tone="info">No lot of this type has readings after time zero yet.</Banner>
            )}
            <Card
              title="Next qualification"
              description="Sample size so that a lot with the chosen defect fraction (LTPD) would pass with at most 10 % probability."
            >
              <SegmentedChoice
                label="LTPD, %"
                options={LTPDS.map((v) => ({ value: v, label: `${v} %` }))}
                value={ltpd}
                onChange={setLtpd}
              />
              <SegmentedChoice
                label="Failures accepted"
                options={ACCEPTS.map((v) => ({ value: v, label: v }))}
                value={accept}
                onChange={setAccept}
              />
              <Text variant="title" testID="next-sample-size">
                {t.nextQualification.sampleSize} devices
              </Text>
              <Text variant="caption" tone="muted">
                {t.nextQualification.method}. Confidence {t.nextQualification.confidence * 100} %.
              </Text>
            </Card>
            <Card title="Lots">
              <View style={{ gap: space.xs }}>
                {t.lotVerdicts.map((l) => (
                  <Pressable
                    key={l.lotId}
                    accessibilityRole="link"
                    accessibilityLabel={`Open lot ${l.lotCode}`}
                    onPress={() => router.push(`/trends/lots/${l.lotId}` as Href)}
                    style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm, minHeight: 40 }}
                  >
                    <Text variant="bodyStrong" style={{ color: colors.focus, textDecorationLine: 'underline', minWidth: 96 }}>
                      {l.lotCode}
                    </Text>
                    <VerdictPill verdict={l.verdict} />
                  </Pressable>
                ))}
              </View>
            </Card>
            <Text variant="caption" tone="muted">
              Device-hours count each device up to its lot's latest read point. Acceleration assumes one thermally activated mechanism;
              confirm with failure analysis.
            </Text>
          </View>
        )}
      </QueryState>
    </Screen>
  );
}
