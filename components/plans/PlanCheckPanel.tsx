import { useState } from 'react';
import { View } from 'react-native';
import type { CheckFinding, PlanCheckResult } from '@/shared/schemas/plans';
import { formatDateTime } from '@/components/common/format';
import { sig, withPrefix } from '@/components/devices/format';
import { colors, radius, space, tones, type Tone } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { StatusShape } from '@/components/ui/StatusShape';
import { Text } from '@/components/ui/Text';
import { CheckStatusPill } from './CheckStatusPill';
import { countOf } from '@/shared/domain/format';

const SEVERITY: Record<CheckFinding['severity'], { tone: Tone; word: string; order: number }> = {
  block: { tone: 'danger', word: 'Refuses', order: 0 },
  warn: { tone: 'attention', word: 'Warning', order: 1 },
  ok: { tone: 'ok', word: 'OK', order: 2 },
};

function formatValue(value: number, unit: string): string {
  if (unit === 'A' || unit === 'W') return withPrefix(value, unit);
  if (unit === '') return sig(value);
  if (unit === '°C') return `${sig(value, 4)} °C`;
  return `${sig(value)} ${unit}`;
}

function FindingRow({ f }: { f: CheckFinding }) {
  const s = SEVERITY[f.severity];
  const keys = f.order?.filter((k) => k in f.numbers) ?? Object.keys(f.numbers);
  const nums = keys.map((k) => [k, f.numbers[k]] as const);
  return (
    <View
      role="listitem"
      testID={`finding-${f.code}`}
      style={{
        flexDirection: 'row',
        gap: space.sm,
        padding: space.sm,
        borderRadius: radius.md,
        borderWidth: 1,
        borderColor: tones[s.tone].edge,
        backgroundColor: f.severity === 'ok' ? colors.surface : tones[s.tone].bg,
      }}
    >
      <View style={{ paddingTop: 3 }}>
        <StatusShape tone={s.tone} size={18} />
      </View>
      <View style={{ flex: 1, gap: space.xxs }}>
        <Text variant="bodyStrong">
          <Text variant="bodyStrong" style={{ color: tones[s.tone].fg }}>
            {s.word}:{' '}
          </Text>
          {f.title}
        </Text>
        <Text variant="caption">{f.explanation}</Text>
        {nums.length ? (
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', columnGap: space.md, rowGap: 2 }}>
            {nums.map(([k, n]) => (
              <Text key={k} variant="caption" tone="muted">
                {n.label}:{' '}
                <Text variant="caption" style={{ fontWeight: '600' }}>
                  {n.unit === '' && k === 'fractionOfRating' ? `${sig(n.value * 100)} %` : formatValue(n.value, n.unit)}
                </Text>
              </Text>
            ))}
          </View>
        ) : null}
      </View>
    </View>
  );
}

interface Props {
  check: PlanCheckResult | undefined | null;
  /** The form changed and a new check is on its way. */
  pending?: boolean;
  /** Shown instead of findings while the plan is incomplete. */
  incomplete?: string | null;
  error?: string | null;
  title?: string;
  /** Stored checks say when they were made. */
  stored?: boolean;
}

/** Every finding of the plan check, severity in words and shape, with its explanation and numbers. */
export function PlanCheckPanel({ check, pending, incomplete, error, title = 'Plan check', stored }: Props) {
  const [showOk, setShowOk] = useState(false);
  const findings = [...(check?.findings ?? [])].sort((a, b) => SEVERITY[a.severity].order - SEVERITY[b.severity].order);
  const serious = findings.filter((f) => f.severity !== 'ok');
  const ok = findings.filter((f) => f.severity === 'ok');
  const blocks = serious.filter((f) => f.severity === 'block').length;
  const warns = serious.length - blocks;
  return (
    <Card
      title={title}
      description={
        stored && check
          ? `Stored with this version: checked ${formatDateTime(check.checkedAt)} against the ratings of ${check.device.partNumber} at that time.`
          : 'Checks breakdown, current, dissipation, junction temperature and thermal runaway against the device ratings as you type.'
      }
      testID="plan-check"
    >
      <View accessibilityLiveRegion="polite" style={{ gap: space.sm }}>
        {incomplete ? (
          <Text variant="body" tone="muted">
            {incomplete}
          </Text>
        ) : error ? (
          <Text variant="body" tone="danger">
            {error}
          </Text>
        ) : !check ? (
          <Text variant="body" tone="muted">
            Checking…
          </Text>
        ) : (
          <>
            <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' }}>
              <CheckStatusPill status={check.status} />
              <Text variant="caption" tone="muted">
                {blocks ? `${countOf(blocks, 'refusal')}` : 'No refusals'} · {countOf(warns, 'warning')} · {ok.length} OK
                {pending ? ' · updating…' : ''}
              </Text>
            </View>
            {check.blocking ? (
              <Text variant="caption">
                A plan the check refuses can be saved as a draft, but a run cannot be booked with it unless an engineer writes down why.
              </Text>
            ) : null}
            <View accessibilityRole="list" style={{ gap: space.xs }}>
              {serious.map((f) => (
                <FindingRow key={f.code} f={f} />
              ))}
              {showOk ? ok.map((f) => <FindingRow key={f.code} f={f} />) : null}
            </View>
            {ok.length ? (
              <Button
                size="sm"
                variant="quiet"
                label={showOk ? 'Hide the checks that pass' : `Show the ${countOf(ok.length, 'check')} that pass`}
                onPress={() => setShowOk(!showOk)}
              />
            ) : null}
            <Text variant="caption" tone="subtle">
              Thresholds used: warn at {sig((check.constants.warnFractionOfLimit ?? 0) * 100)} % of a limit; breakdown derated to{' '}
              {sig((check.constants.breakdownDerating ?? 0) * 100)} %; runaway loop gain warns at {sig(check.constants.loopGainWarn)} and
              refuses at {sig(check.constants.loopGainBlock)}; leakage doubles every {sig(check.constants.leakageDoublingC)} °C. A software
              check is no substitute for the rig's hardware interlocks.
            </Text>
          </>
        )}
      </View>
    </Card>
  );
}
