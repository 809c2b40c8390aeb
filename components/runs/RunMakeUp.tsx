/**
 * The make-up card on a run's page: what the sample lost (lost, damaged, excluded, tripped and not
 * yet decided), the LTPD the devices left demonstrate against the plan's, the proposed make-up and
 * the earliest rig time, and one button to book it into the same sample (judged as one). A run over
 * several lots shows a block per lot: the verdict judges each lot on its own, so each is made up on its own.
 */
import { useRouter } from 'expo-router';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useBookMakeUp, useMakeUp } from '@/components/queries/make-up';
import { colors, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Fact } from '@/components/ui/Fact';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { countOf } from '@/shared/domain/format';
import type { MakeUpLostDevice, MakeUpLotView, MakeUpView } from '@/shared/schemas/make-up';

const pct = (f: number | null) => (f === null ? 'none' : `${(f * 100).toFixed(2)} %`);

/** Shown when the sample has lost devices (or the proposal has something to say); nothing otherwise. */
export function RunMakeUpCard({ runId }: { runId: string }) {
  const q = useMakeUp(runId);
  const v = q.data;
  if (!v || v.status === 'unavailable' || (v.status === 'nothing-to-restore' && v.lost.length === 0)) return null;
  return <MakeUpBody v={v} />;
}

type Tone = 'attention' | 'info' | 'ok' | 'danger';

function statusOf(s: { status: MakeUpView['status']; makeUpSize: number; notStarted: number }): { tone: Tone; label: string } {
  if (s.status === 'possible') return { tone: 'attention', label: `Make-up of ${s.makeUpSize}` };
  if (s.status === 'nothing-to-restore')
    return s.notStarted > 0 ? { tone: 'info', label: 'Make-up booked' } : { tone: 'ok', label: 'Sample restored' };
  if (s.status === 'failed-already') return { tone: 'danger', label: 'Sample failed' };
  if (s.status === 'too-few-fresh') return { tone: 'danger', label: 'Too few fresh devices' };
  return { tone: 'info', label: 'Judged on another sample' };
}

function lostWords(lost: MakeUpLostDevice[]) {
  const removed = lost.filter((d) => d.kind === 'removed').length;
  const tripped = lost.length - removed;
  return `${countOf(removed, 'device')} lost or excluded${tripped ? ` · ${tripped} tripped, undecided` : ''}`;
}

/** One lot's figures: the whole card's for a run of one lot, a block per lot for a run over several. */
function LotFacts({ l, lost, single }: { l: MakeUpLotView; lost: MakeUpLostDevice[]; single: boolean }) {
  const id = (x: string) => (single ? x : undefined);
  return (
    <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
      <Fact label="Out of the sample" testID={id('make-up-lost-count')} value={lostWords(lost)} />
      <Fact label="Still in the sample" value={`${l.valid} of ${l.booked} booked${l.notStarted ? ` (${l.notStarted} not started)` : ''}`} />
      <Fact label={l.notStarted ? 'LTPD now (devices on test)' : 'LTPD now'} value={pct(l.ltpdNow)} testID={id('make-up-ltpd-now')} />
      {single ? null : <Fact label="Restored LTPD" value={pct(l.restoredLtpd)} />}
    </View>
  );
}

function LotBlock({ l, lost }: { l: MakeUpLotView; lost: MakeUpLostDevice[] }) {
  const s = statusOf(l);
  return (
    <View
      style={{ gap: space.xs, paddingTop: space.sm, borderTopWidth: 1, borderTopColor: colors.border }}
      testID={`make-up-lot-${l.lot.code}`}
      accessibilityLabel={`Lot ${l.lot.code}`}
    >
      <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
        <Text variant="bodyStrong">{`Lot ${l.lot.code}`}</Text>
        <StatusPill tone={s.tone} label={s.label} />
      </View>
      <LotFacts l={l} lost={lost} single={false} />
      <Text variant="caption">{l.explanation}</Text>
    </View>
  );
}

function MakeUpBody({ v }: { v: MakeUpView }) {
  const can = useCan();
  const book = useBookMakeUp(v.runId);
  const router = useRouter();
  const single = v.lots.length === 1 ? v.lots[0] : null;
  const notStarted = v.lots.reduce((n, l) => n + l.notStarted, 0);
  const { tone, label } = statusOf({ status: v.status, makeUpSize: v.makeUpSize, notStarted });
  const possible = v.lots.filter((l) => l.status === 'possible');
  return (
    <Card title="Make-up sample" testID="make-up-card">
      <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
        <StatusPill tone={tone} label={label} testID="make-up-status" />
        <Text variant="caption" tone="muted">
          {`Plan: ${v.plan.sampleSize} devices, accept number ${v.plan.acceptNumber}, LTPD at ${Math.round(v.confidence * 100)} % confidence${single ? '' : ', for each lot'}`}
        </Text>
      </View>
      {single ? (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
          <View style={{ flexGrow: 3, flexBasis: 450 }}>
            <LotFacts l={single} lost={v.lost} single />
          </View>
          <Fact label="LTPD planned" value={pct(v.planLtpd)} testID="make-up-ltpd-plan" />
        </View>
      ) : (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
          <Fact label="Out of the sample" testID="make-up-lost-count" value={lostWords(v.lost)} />
          <Fact label="LTPD planned (each lot)" value={pct(v.planLtpd)} testID="make-up-ltpd-plan" />
        </View>
      )}
      {v.lost.length ? (
        <View accessibilityLabel="Devices out of the sample" testID="make-up-lost" style={{ gap: 2 }}>
          {v.lost.map((d) => (
            <Text key={`${d.runCode}-${d.serial}`} variant="caption">
              {single ? `${d.serial} (${d.runCode}): ${d.why}` : `${d.serial} (lot ${d.lotCode}, ${d.runCode}): ${d.why}`}
            </Text>
          ))}
        </View>
      ) : null}
      <Banner
        tone={v.status === 'possible' || notStarted ? 'info' : v.status === 'nothing-to-restore' ? 'ok' : 'warn'}
        testID="make-up-explanation"
      >
        {v.explanation}
      </Banner>
      {single ? null : v.lots.map((l) => <LotBlock key={l.lot.id} l={l} lost={v.lost.filter((d) => d.lotCode === l.lot.code)} />)}
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
                  {
                    rigId: v.slot.rigId,
                    start: v.slot.start,
                    makeUpSize: v.makeUpSize,
                    sampleBookedSize: v.sampleBookedSize,
                    lots: possible.map((l) => ({ lotId: l.lot.id, makeUpSize: l.makeUpSize })),
                  },
                  { onSuccess: (b) => b.runs[0] && router.push(`/runs/${b.runs[0].id}`) },
                )
              }
            />
          ) : (
            <Text variant="caption" tone="muted">
              Engineers book make-up runs.
            </Text>
          )}
          {single ? null : (
            <Text variant="caption" tone="muted" testID="make-up-per-lot">
              {`One press books ${countOf(possible.length, 'make-up run')} on the rig, one per lot made up, so each run’s sockets take only its own lot’s devices.`}
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
