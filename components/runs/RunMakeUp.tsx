/**
 * The make-up card on a run's page: what the sample lost (lost, damaged, excluded, tripped and not
 * yet decided), the LTPD the devices left demonstrate against the plan's, the proposed make-up and
 * the earliest rig time, and one button to book it into the same sample (judged as one).
 */
import { useRouter } from 'expo-router';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useBookMakeUp, useMakeUp } from '@/components/queries/make-up';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Fact } from '@/components/ui/Fact';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { countOf } from '@/shared/domain/format';
import type { MakeUpView } from '@/shared/schemas/make-up';

const pct = (f: number | null) => (f === null ? 'none' : `${(f * 100).toFixed(2)} %`);

/** Shown when the sample has lost devices (or the proposal has something to say); nothing otherwise. */
export function RunMakeUpCard({ runId }: { runId: string }) {
  const q = useMakeUp(runId);
  const v = q.data;
  if (!v || v.status === 'unavailable' || (v.status === 'nothing-to-restore' && v.lost.length === 0)) return null;
  return <MakeUpBody v={v} />;
}

function MakeUpBody({ v }: { v: MakeUpView }) {
  const can = useCan();
  const book = useBookMakeUp(v.runId);
  const router = useRouter();
  const removed = v.lost.filter((d) => d.kind === 'removed').length;
  const tripped = v.lost.length - removed;
  const tone = v.status === 'possible' ? 'attention' : v.status === 'nothing-to-restore' ? (v.notStarted ? 'info' : 'ok') : 'danger';
  const label =
    v.status === 'possible'
      ? `Make-up of ${v.makeUpSize}`
      : v.status === 'nothing-to-restore'
        ? v.notStarted > 0
          ? 'Make-up booked'
          : 'Sample restored'
        : v.status === 'failed-already'
          ? 'Sample failed'
          : 'Too few fresh devices';
  return (
    <Card title="Make-up sample" testID="make-up-card">
      <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
        <StatusPill tone={tone} label={label} testID="make-up-status" />
        <Text variant="caption" tone="muted">
          {`Plan: ${v.plan.sampleSize} devices, accept number ${v.plan.acceptNumber}, LTPD at ${Math.round(v.confidence * 100)} % confidence`}
        </Text>
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <Fact
          label="Out of the sample"
          testID="make-up-lost-count"
          value={`${countOf(removed, 'device')} lost or excluded${tripped ? ` · ${tripped} tripped, undecided` : ''}`}
        />
        <Fact
          label="Still in the sample"
          value={`${v.valid} of ${v.sampleBookedSize} booked${v.notStarted ? ` (${v.notStarted} not started)` : ''}`}
        />
        <Fact label={v.notStarted ? 'LTPD now (devices on test)' : 'LTPD now'} value={pct(v.ltpdNow)} testID="make-up-ltpd-now" />
        <Fact label="LTPD planned" value={pct(v.planLtpd)} testID="make-up-ltpd-plan" />
      </View>
      {v.lost.length ? (
        <View accessibilityLabel="Devices out of the sample" testID="make-up-lost" style={{ gap: 2 }}>
          {v.lost.map((d) => (
            <Text key={`${d.runCode}-${d.serial}`} variant="caption">
              {`${d.serial} (${d.runCode}): ${d.why}`}
            </Text>
          ))}
        </View>
      ) : null}
      <Banner
        tone={v.status === 'possible' || v.notStarted ? 'info' : v.status === 'nothing-to-restore' ? 'ok' : 'warn'}
        testID="make-up-explanation"
      >
        {v.explanation}
      </Banner>
      {v.status === 'possible' ? (
        <View style={{ gap: space.xs }}>
          {v.slot ? (
            <Text testID="make-up-slot">
              {`Earliest rig time: ${v.slot.rigCode} (${v.slot.rigName}), ${formatDateTime(v.slot.start)} → ${formatDateTime(v.slot.end)}.`}
            </Text>
          ) : (
            <Text tone="attention" testID="make-up-slot">
              No rig can take the make-up now.
            </Text>
          )}
          {v.slotProblems.map((p) => (
            <Text key={p} variant="caption" tone="attention">
              {p}
            </Text>
          ))}
          {can('run.book') ? (
            <Button
              label={v.slot ? `Book the make-up on ${v.slot.rigCode}` : 'Book the make-up'}
              variant="primary"
              testID="make-up-book"
              disabled={!v.slot || v.needsOverride}
              busy={book.isPending}
              busyLabel="Booking…"
              onPress={() =>
                v.slot &&
                book.mutate(
                  { rigId: v.slot.rigId, start: v.slot.start, makeUpSize: v.makeUpSize, sampleBookedSize: v.sampleBookedSize },
                  { onSuccess: (run) => router.push(`/runs/${run.id}`) },
                )
              }
            />
          ) : (
            <Text variant="caption" tone="muted">
              Engineers book make-up runs.
            </Text>
          )}
          {v.needsOverride ? (
            <Text variant="caption" tone="attention">
              The plan check blocks this booking: book it from the schedule with an approved override.
            </Text>
          ) : null}
          {book.isError ? <Banner tone="danger">{describeError(book.error)}</Banner> : null}
          <Text variant="caption" tone="muted">
            Booking reserves the rig only: the make-up run heats and applies bias after its sockets are loaded and the start checks pass.
          </Text>
        </View>
      ) : null}
      <Text variant="caption" tone="muted" testID="make-up-rule">
        {v.rule}
      </Text>
    </Card>
  );
}
