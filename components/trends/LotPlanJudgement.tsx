import { View } from 'react-native';
import type { LotPlanView } from '@/shared/schemas/analytics';
import type { DeviceDegradation, PeerCheck, ReadPointStatus } from '@/shared/verdict/judge';
import { EXTRAPOLATION_LIMIT, PEER_CHART_MIN_LOTS } from '@/shared/verdict/rules';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { hours, PARAM_LABEL, sig } from './format';
import { formatLocalDate, countOf } from '@/shared/domain/format';
import { VerdictPill } from './verdict';

const ltpd = (f: number | null) => (f === null ? '—' : `${sig(f * 100, 3)} %`);
const testKey = (s: string) => s.replace(/[^A-Za-z0-9]+/g, '-').toLowerCase();

function readPointState(r: ReadPointStatus) {
  if (r.complete) return { tone: 'ok' as const, label: 'Complete' };
  if (!r.due) return { tone: 'idle' as const, label: 'Not reached' };
  return { tone: 'attention' as const, label: `${r.missing.length} missing` };
}

const rpColumns: Column<ReadPointStatus>[] = [
  { key: 'h', title: 'Read point', flex: 0.8, card: 'title', render: (r) => hours(r.hours) },
  { key: 'state', title: 'State', flex: 1, render: (r) => <StatusPill size="sm" {...readPointState(r)} /> },
  { key: 'exp', title: 'Expected', flex: 0.7, align: 'right', render: (r) => String(r.expected) },
  { key: 'm', title: 'Measured', flex: 0.7, align: 'right', render: (r) => String(r.measured) },
  { key: 'c', title: 'Open / short / failed', flex: 1, align: 'right', render: (r) => String(r.catastrophic) },
  { key: 'rm', title: 'Left the sample', flex: 0.9, align: 'right', render: (r) => String(r.removed) },
  { key: 'f', title: 'Awaiting confirmation', flex: 1, align: 'right', render: (r) => String(r.awaitingConfirmation) },
];

const degColumns: Column<DeviceDegradation>[] = [
  { key: 'serial', title: 'Serial', flex: 0.8, card: 'title', render: (d) => d.serial },
  {
    key: 'hfe',
    title: 'hFE slope',
    flex: 1,
    align: 'right',
    render: (d) => {
      const p = d.paths.find((x) => x.parameter === 'hfe');
      return p ? `${sig(p.slopePerHour * 1000)} % / 1,000 h` : '—';
    },
  },
  {
    key: 'icbo',
    title: 'ICBO ratio slope',
    flex: 1,
    align: 'right',
    render: (d) => {
      const p = d.paths.find((x) => x.parameter === 'icbo');
      return p ? `×${sig(Math.exp(p.slopePerHour * 1000))} / 1,000 h` : '—';
    },
  },
  {
    key: 'pf',
    title: 'Pseudo-failure time',
    flex: 1.1,
    align: 'right',
    render: (d) => (d.pseudoFailureH === null ? '—' : `${hours(d.pseudoFailureH)} (${PARAM_LABEL[d.parameter!]})`),
  },
  {
    key: 'life',
    title: 'In the life fit',
    flex: 1.3,
    render: (d) =>
      d.life ? (
        <Text variant="caption">
          {d.life.kind === 'failure' ? 'Failure' : 'Suspension'} at {hours(d.life.hours)}: {d.life.why}
        </Text>
      ) : (
        '—'
      ),
  },
];

function PeerLine({ c }: { c: PeerCheck }) {
  const what = c.parameter === 'hfe' ? 'Mean hFE change' : 'Median ICBO ratio';
  const unit = c.parameter === 'hfe' ? ' %' : '×';
  return (
    <View style={{ gap: 2 }} testID={`peer-${c.parameter}`}>
      <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
        <Text variant="bodyStrong">
          {what} at {hours(c.readPointH)}: {sig(c.value)}
          {unit}
        </Text>
        {c.method === null ? (
          <StatusPill size="sm" tone="idle" label="Not judged" />
        ) : (
          <StatusPill
            size="sm"
            tone={c.outOfLimits ? 'attention' : 'ok'}
            label={c.outOfLimits ? 'Outside the limits' : 'Within the limits'}
          />
        )}
      </View>
      {c.method === null ? (
        <Text variant="caption" tone="muted">
          {c.note}
        </Text>
      ) : (
        <Text variant="caption" testID={`peer-limits-${c.parameter}`}>
          {c.method === 'prediction-interval'
            ? `Limits ${sig(c.lower)} to ${sig(c.upper)}${unit}: ${sig((c.confidence ?? 0) * 100, 4)} % prediction interval for one new lot from ${c.peers.length} peer lots (x̄ ± t·s·√(1 + 1/m), Student t with ${c.peers.length - 1} degrees of freedom).`
            : `Limits ${sig(c.lower)} to ${sig(c.upper)}${unit}: individuals chart from ${c.peers.length} peer lots in production order (mean ± 2.66 × average moving range).`}{' '}
          Peers: {c.peers.map((p) => `${p.lotCode} ${sig(p.value)}`).join(', ')}.{c.violations.length ? ` ${c.violations.join('; ')}.` : ''}
        </Text>
      )}
    </View>
  );
}

/** One plan's judgement of a lot: verdict and reasons, sample, read points, degradation and life, peers, FIT. */
export function LotPlanJudgement({ plan: p }: { plan: LotPlanView }) {
  const s = p.sample;
  const deg = p.degradation;
  const incomplete = p.readPoints.filter((r) => r.due && !r.complete);
  const key = testKey(p.planName);
  return (
    <View style={{ gap: space.md }} testID={`plan-judgement-${key}`}>
      <Card
        title={p.planName}
        description={`Stressed on ${p.runs.map((r) => `${r.runCode}${r.rigCode ? ` (${r.rigCode})` : ''}, ${r.state} at ${hours(r.stressHours)}`).join(' + ')}`}
      >
        <View style={{ gap: space.sm }}>
          <VerdictPill verdict={p.verdict} size="md" />
          {p.reasons.map((r, i) => (
            <Text key={i} variant={i === 0 ? 'bodyStrong' : 'body'}>
              • {r}
            </Text>
          ))}
        </View>
      </Card>

      <Card
        title="Sample"
        description={`What the devices judged demonstrate at ${sig(s.confidence * 100)} % confidence, exact binomial (LTPD = BetaInv(CL; c + 1, n − c)).`}
      >
        <View style={{ gap: space.xs }} testID="plan-sample">
          <View style={{ flexDirection: 'row', gap: space.lg, flexWrap: 'wrap' }}>
            {[
              ['Plan asks', `${s.planned} devices, accept ${s.acceptNumber}`],
              ['Booked', `${s.booked}${p.runs.length > 1 ? ` on ${p.runs.length} rigs` : ''}`],
              ['Judged', `${s.judged}${s.removed ? ` (${s.removed} left)` : ''}`],
              ['Failures', String(s.failures)],
              ['LTPD demonstrated', ltpd(s.demonstratedLtpd)],
              ["Plan's LTPD", ltpd(s.planLtpd)],
            ].map(([label, value]) => (
              <View key={label}>
                <Text variant="caption" tone="muted">
                  {label}
                </Text>
                <Text variant="bodyStrong">{value}</Text>
              </View>
            ))}
          </View>
          {s.deviation ? (
            <Text variant="caption">
              Recorded deviation: {s.deviation.sampleSize} devices — {s.deviation.reason} ({s.deviation.by},{' '}
              {formatLocalDate(s.deviation.at)}).
            </Text>
          ) : null}
        </View>
      </Card>

      <View style={{ gap: space.xs }}>
        <Text variant="heading" heading={3}>
          Read points: every device accounted for
        </Text>
        <DataTable
          caption={`Read-point completeness, ${p.planName}`}
          columns={rpColumns}
          rows={p.readPoints}
          rowKey={(r) => String(r.hours)}
          minTableWidth={720}
          testID="plan-readpoints"
        />
        {incomplete.map((r) => (
          <Banner key={r.hours} tone="warn" title={`Read point ${hours(r.hours)} is incomplete`} testID={`missing-${r.hours}`}>
            {`${r.missing.length} of ${r.expected} devices have no reading that counts yet: ${r.missing
              .slice(0, 12)
              .map((m) => `${m.serial} (${m.why})`)
              .join('; ')}${r.missing.length > 12 ? `; and ${r.missing.length - 12} more` : ''}.`}
          </Banner>
        ))}
      </View>

      <Card
        title="Degradation and life"
        description={`Each device's path fitted through the origin and solved for the plan's limit (pseudo-failure time, NIST/SEMATECH e-Handbook §8.4.2.3); a device that reaches no limit within ${EXTRAPOLATION_LIMIT}× its last read point, or left the test, is a suspension. Weibull fitted by maximum likelihood.`}
      >
        <View style={{ gap: space.sm }} testID="plan-degradation">
          {deg.weibull ? (
            <View style={{ flexDirection: 'row', gap: space.lg, flexWrap: 'wrap' }} testID="weibull-fit">
              {[
                ['Weibull shape β', sig(deg.weibull.beta)],
                ['Scale η', hours(deg.weibull.eta)],
                ['Failures / suspensions', `${deg.weibull.failures} / ${deg.weibull.suspensions}`],
                ['Projected to fail by target life', `${sig(deg.weibull.fractionByTargetLife * 100)} %`],
              ].map(([label, value]) => (
                <View key={label}>
                  <Text variant="caption" tone="muted">
                    {label}
                  </Text>
                  <Text variant="title">{value}</Text>
                </View>
              ))}
            </View>
          ) : null}
          <Text variant="caption">{deg.note}</Text>
          <DataTable
            caption={`Degradation per device, ${p.planName}`}
            columns={degColumns}
            rows={deg.devices}
            rowKey={(d) => d.deviceId}
            minTableWidth={760}
            testID="plan-degradation-devices"
          />
        </View>
      </Card>

      <Card
        title="Against peer lots"
        description={`Lots stressed under the same plan conditions, in production order. Below ${PEER_CHART_MIN_LOTS} peers the limits are a prediction interval for one new lot; from ${PEER_CHART_MIN_LOTS} on, an individuals chart.`}
      >
        <View style={{ gap: space.sm }}>
          {p.peers.length ? (
            p.peers.map((c) => <PeerLine key={c.parameter} c={c} />)
          ) : (
            <Text tone="muted">Needs a read point after time zero.</Text>
          )}
        </View>
      </Card>

      {p.fit ? (
        <Text variant="caption" testID="plan-fit">
          {p.fit.mechanismLabel} FIT {sig(p.fit.fit60)} at 60 %, {sig(p.fit.fit90)} at 90 %: {countOf(p.fit.failures, 'failure')} in{' '}
          {Math.round(p.fit.deviceHours).toLocaleString('en-GB')} device-hours credited to {p.fit.devices} devices (each socket's own hours
          at its estimated junction), mean acceleration {sig(p.fit.accelerationFactor)}.
        </Text>
      ) : p.fitUnavailable ? (
        <Text variant="caption" tone="muted" testID="plan-fit">
          {p.fitUnavailable}
        </Text>
      ) : null}
    </View>
  );
}
