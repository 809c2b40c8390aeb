/**
 * Booking (engineers): plan version + lots + sample size → rigs that can take the run, ranked by
 * finish, with the reasons others cannot → book. A plan whose check blocks needs a written
 * override approved by a second person (OverrideRequestPanel), which is audited. A sample smaller than the plan's
 * needs a recorded deviation; a sample larger than one rig is split across two rigs and booked
 * together (one run per rig, judged as one sample).
 */
import { useRouter } from 'expo-router';
import { useEffect, useMemo, useState } from 'react';
import { Pressable, View } from 'react-native';
import { describeError } from '@/components/queries/api';
import { useLots } from '@/components/queries/lots';
import { usePlan, usePlans } from '@/components/queries/plans';
import { useBookRun, useBookSample, useProposals } from '@/components/queries/runs';
import { hours, shortTime } from '@/components/runs/run-look';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { Loading } from '@/components/ui/Loading';
import { Badge, StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { DEVIATION_REASON_MIN, sampleShortfall } from '@/shared/evidence';
import type { ProposalOption, ProposalResult } from '@/shared/schemas/runs';
import { OverrideRequestPanel } from '@/components/approvals/OverrideRequestPanel';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { DEFAULT_PRIORITY, PRIORITIES, PRIORITY_LABEL, isPriority, type Priority } from '@/shared/domain/priority';
import { latenessWords, parseDueInput } from './timeline-scale';

const PRIORITY_CHOICES = PRIORITIES.map((p) => ({ value: String(p), label: PRIORITY_LABEL[p] }));

function Chip({ label, selected, onPress, hint }: { label: string; selected: boolean; onPress: () => void; hint?: string }) {
  return (
    <Pressable
      accessibilityRole="checkbox"
      accessibilityState={{ checked: selected }}
      aria-checked={selected}
      accessibilityLabel={label}
      accessibilityHint={hint}
      onPress={onPress}
      style={{
        minHeight: 40,
        // A long plan name wraps inside the chip instead of pushing the page wider than a phone.
        maxWidth: '100%',
        flexShrink: 1,
        paddingVertical: space.xxs,
        paddingHorizontal: space.sm,
        justifyContent: 'center',
        borderRadius: radius.pill,
        borderWidth: selected ? 2 : 1,
        borderColor: selected ? colors.ember : colors.borderStrong,
        backgroundColor: selected ? colors.emberSoft : colors.surface,
      }}
    >
      <Text variant="label" style={{ flexShrink: 1 }}>
        {selected ? `✓ ${label}` : label}
      </Text>
    </Pressable>
  );
}

export function BookingPanel({ onDone }: { onDone: () => void }) {
  const router = useRouter();
  const plans = usePlans();
  const [planKey, setPlanKey] = useState<string | undefined>();
  const current = plans.data?.find((p) => p.planKey === planKey);
  const detail = usePlan(current?.id);
  const [versionId, setVersionId] = useState<string | undefined>();
  const lots = useLots({ deviceTypeId: current?.device.id });
  const [lotIds, setLotIds] = useState<string[]>([]);
  const [sample, setSample] = useState('');
  const [dueText, setDueText] = useState('');
  const [priority, setPriority] = useState<Priority>(DEFAULT_PRIORITY);
  /** The approved override request this booking uses (a blocked plan needs one). */
  const [approvedRequest, setApprovedRequest] = useState<string | null>(null);
  const [deviation, setDeviation] = useState('');
  /** Split: devices on the first rig (the rest go to a second rig, booked together as one sample). */
  const [split, setSplit] = useState(false);
  const [firstPart, setFirstPart] = useState('');
  const [picked, setPicked] = useState<Array<string | undefined>>([undefined, undefined]);
  const proposals = useProposals();
  const proposals2 = useProposals();
  const book = useBookRun();
  const bookSample = useBookSample();

  useEffect(() => {
    setVersionId(current?.id);
    setLotIds([]);
    setSample(current ? String(current.sampleSize) : '');
    setSplit(false);
    proposals.reset();
    proposals2.reset();
    // eslint-disable-next-line react-hooks/exhaustive-deps -- reset when another plan is chosen, not on every render of `current` / `proposals`
  }, [planKey]);

  const sampleSize = Number(sample);
  const sampleError =
    sample && (!Number.isInteger(sampleSize) || sampleSize < 1 || sampleSize > 256) ? 'A whole number of devices, 1–256' : undefined;
  const first = Number(firstPart);
  const splitError =
    split && (!Number.isInteger(first) || first < 1 || first >= sampleSize)
      ? `Between 1 and ${Math.max(1, sampleSize - 1)} devices on the first rig`
      : undefined;
  const due = parseDueInput(dueText);
  const dueError = 'error' in due ? due.error : undefined;
  const dueAt = 'iso' in due ? due.iso : null;
  const ready = !!versionId && lotIds.length > 0 && !!sample && !sampleError && !splitError && !dueError;
  const request = useMemo(
    () => (ready ? { planId: versionId!, lotIds, sampleSize, dueAt, priority } : null),
    [ready, versionId, lotIds, sampleSize, dueAt, priority],
  );
  const parts = split && request ? [first, sampleSize - first] : null;
  const result = proposals.data;
  const result2 = split ? proposals2.data : undefined;
  const blocks = (result?.blockingFindings.length ?? 0) > 0;
  const reasonOk = approvedRequest !== null;
  const shortfall = current ? sampleShortfall(current.sampleSize, sampleSize || 0, lotIds.length) : null;
  const deviationOk = !shortfall || deviation.trim().length >= DEVIATION_REASON_MIN;
  const extras = () => ({
    ...(blocks && approvedRequest ? { override: { requestId: approvedRequest } } : {}),
    ...(shortfall ? { deviation: { reason: deviation.trim() } } : {}),
  });

  const find = () => {
    if (!request) return;
    setPicked([undefined, undefined]);
    if (parts) {
      proposals.mutate({ ...request, sampleSize: parts[0] });
      proposals2.mutate({ ...request, sampleSize: parts[1] });
    } else {
      proposals2.reset();
      proposals.mutate(request);
    }
  };

  const onBook = (o: ProposalOption) => {
    if (!request) return;
    book.mutate(
      { ...request, rigId: o.rigId, start: o.start, ...extras() },
      {
        onSuccess: (run) => {
          onDone();
          router.push(`/runs/${run.id}`);
        },
      },
    );
  };

  const pickedOptions = [result, result2].map((r, i) => r?.options.find((o) => o.rigId === picked[i]));
  const onBookSample = () => {
    if (!request || !parts || !pickedOptions[0] || !pickedOptions[1]) return;
    bookSample.mutate(
      {
        planId: request.planId,
        lotIds: request.lotIds,
        parts: pickedOptions.map((o, i) => ({ rigId: o!.rigId, start: o!.start, sampleSize: parts[i] })),
        dueAt: request.dueAt,
        priority: request.priority,
        ...extras(),
      },
      {
        onSuccess: (b) => {
          onDone();
          router.push(`/runs/${b.runs[0].id}`);
        },
      },
    );
  };

  const deviationField = shortfall ? (
    <Banner tone="warn" title="Smaller than the plan's sample">
      <View style={{ gap: space.xs }}>
        <Text variant="caption">
          {`${shortfall} The verdict will say what ${sampleSize} devices demonstrate. Split the sample across rigs to book all ${current?.sampleSize}, or record why a smaller sample may stand.`}
        </Text>
        <Field
          label="Deviation reason (engineer, recorded in the audit trail)"
          multiline
          value={deviation}
          onChangeText={setDeviation}
          help={`At least ${DEVIATION_REASON_MIN} characters.`}
          error={deviation && !deviationOk ? `Write at least ${DEVIATION_REASON_MIN} characters` : undefined}
        />
      </View>
    </Banner>
  ) : null;

  const partChoice = (r: ProposalResult | undefined, i: number) =>
    r && parts ? (
      <View key={i} style={{ gap: space.xs }} testID={`split-part-${i + 1}`}>
        <Text variant="label">{`Part ${i + 1}: ${parts[i]} devices`}</Text>
        {r.options.length ? (
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
            {r.options.map((o) => (
              <Chip
                key={o.rigId}
                label={`Part ${i + 1} on ${o.rigCode}`}
                selected={picked[i] === o.rigId}
                hint={`Starts ${shortTime(o.start)}, ${o.spareSockets} sockets to spare`}
                onPress={() => setPicked((p) => p.map((x, j) => (j === i ? o.rigId : j === 1 - i && x === o.rigId ? undefined : x)))}
              />
            ))}
          </View>
        ) : (
          <Text variant="caption" tone="attention">
            No rig can take this part.
          </Text>
        )}
      </View>
    ) : null;

  return (
    <Card title="Book a run" description="Choose a plan version, the lots and how many devices; Emberlot proposes rigs and start times.">
      {plans.isLoading ? <Loading label="Loading plans" variant="spinner" /> : null}
      {plans.isError ? <Banner tone="danger">{describeError(plans.error)}</Banner> : null}
      <View style={{ gap: space.xs }}>
        <Text variant="label">Plan</Text>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
          {(plans.data ?? []).map((p) => (
            <Chip
              key={p.planKey}
              label={`${p.name} · ${p.device.partNumber}`}
              selected={p.planKey === planKey}
              onPress={() => setPlanKey(p.planKey)}
              hint={p.checkStatus === 'block' ? 'The plan check blocks this plan' : undefined}
            />
          ))}
        </View>
        {plans.data && !plans.data.length ? <Text tone="muted">No plans yet. An engineer writes one under Plans.</Text> : null}
      </View>
      {detail.data && detail.data.versions.length > 1 ? (
        <View style={{ gap: space.xs }}>
          <Text variant="label">Version</Text>
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
            {detail.data.versions.map((v) => (
              <Chip
                key={v.id}
                label={`v${v.version}${v.current ? ' (current)' : ''}${v.checkStatus === 'block' ? ' · blocked' : ''}`}
                selected={v.id === versionId}
                onPress={() => setVersionId(v.id)}
              />
            ))}
          </View>
        </View>
      ) : null}
      {current ? (
        <View style={{ gap: space.xs }}>
          <Text variant="label">Lots of {current.device.partNumber}</Text>
          {lots.isLoading ? <Loading label="Loading lots" variant="spinner" /> : null}
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
            {(lots.data ?? []).map((l) => (
              <Chip
                key={l.id}
                label={`${l.code} (${l.deviceCount} registered)`}
                selected={lotIds.includes(l.id)}
                onPress={() => setLotIds((s) => (s.includes(l.id) ? s.filter((x) => x !== l.id) : [...s, l.id]))}
              />
            ))}
          </View>
          {lots.data && !lots.data.length ? <Text tone="muted">No lots of this part are registered yet.</Text> : null}
        </View>
      ) : null}
      {current ? (
        <View style={{ gap: space.xs }}>
          <View style={{ maxWidth: 240 }}>
            <Field
              label="Devices (sample size)"
              keyboardType="number-pad"
              value={sample}
              onChangeText={setSample}
              error={sampleError}
              help={`The plan asks for ${current.sampleSize}.`}
            />
          </View>
          <View style={{ maxWidth: 320 }}>
            <Field
              label="Due date (your time, optional)"
              value={dueText}
              onChangeText={setDueText}
              error={dueError}
              help="YYYY-MM-DD HH:MM, when the results are needed. Empty: no due date."
            />
          </View>
          <SegmentedChoice
            label="Priority"
            options={PRIORITY_CHOICES}
            value={String(priority)}
            onChange={(v) => {
              const n = Number(v);
              if (isPriority(n)) setPriority(n);
            }}
            help="Lateness of an urgent run weighs 8 times that of a low one when the calendar is ordered."
          />
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
            <Chip
              label="Split the sample across two rigs"
              selected={split}
              hint="One run per rig, booked together and judged as one sample"
              onPress={() => {
                setSplit(!split);
                if (!split && !firstPart) setFirstPart(String(Math.min(64, Math.max(1, sampleSize - 1))));
                proposals.reset();
                proposals2.reset();
              }}
            />
          </View>
          {split ? (
            <View style={{ maxWidth: 240 }}>
              <Field
                label="Devices on the first rig"
                keyboardType="number-pad"
                value={firstPart}
                onChangeText={setFirstPart}
                error={splitError}
                help={
                  Number.isInteger(first) && first > 0 && first < sampleSize
                    ? `The other ${sampleSize - first} go to a second rig.`
                    : undefined
                }
              />
            </View>
          ) : null}
        </View>
      ) : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label="Find rigs"
          variant="primary"
          disabled={!request}
          busy={proposals.isPending || proposals2.isPending}
          busyLabel="Finding rigs…"
          onPress={find}
        />
        <Button label="Close" variant="quiet" onPress={onDone} />
      </View>
      {proposals.isError ? <Banner tone="danger">{describeError(proposals.error)}</Banner> : null}
      {proposals2.isError ? <Banner tone="danger">{describeError(proposals2.error)}</Banner> : null}

      {result ? (
        <View style={{ gap: space.md }} testID="booking-proposals">
          <Text variant="caption" tone="muted">
            Length on a rig: {hours(result.durationH)} (plan hours, read-point holds and heat-up).
          </Text>
          {result.problems.length ? (
            <Banner tone="danger" title="This request cannot be booked">
              {result.problems.join(' ')}
            </Banner>
          ) : null}
          {blocks ? (
            <Banner tone="danger" title="The plan check blocks this plan">
              <View style={{ gap: space.xs }}>
                {result.blockingFindings.map((f) => (
                  <Text key={f.code} variant="caption">
                    {f.title}: {f.explanation}
                  </Text>
                ))}
                {versionId ? <OverrideRequestPanel planId={versionId} onApproved={setApprovedRequest} /> : null}
              </View>
            </Banner>
          ) : null}
          {deviationField}
          {parts ? (
            <View style={{ gap: space.sm }} testID="split-booking">
              {partChoice(result, 0)}
              {partChoice(result2, 1)}
              <View style={{ flexDirection: 'row' }}>
                <Button
                  label={
                    pickedOptions[0] && pickedOptions[1]
                      ? `Book the sample on ${pickedOptions[0].rigCode} + ${pickedOptions[1].rigCode}`
                      : 'Choose a rig for each part'
                  }
                  variant="primary"
                  disabled={!pickedOptions[0] || !pickedOptions[1] || (blocks && !reasonOk) || !deviationOk}
                  busy={bookSample.isPending}
                  busyLabel="Booking…"
                  onPress={onBookSample}
                  testID="book-sample"
                />
              </View>
              {bookSample.isError ? <Banner tone="danger">{describeError(bookSample.error)}</Banner> : null}
            </View>
          ) : null}
          {(parts ? [] : result.options).map((o, i) => (
            <View
              key={o.rigId}
              style={{ borderWidth: 1, borderColor: colors.border, borderRadius: radius.md, padding: space.sm, gap: space.xs }}
            >
              <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
                <Text variant="bodyStrong">
                  {o.rigCode} · {o.rigName}
                </Text>
                {i === 0 ? <Badge label="Earliest finish" /> : null}
                {!o.online ? <StatusPill tone="attention" size="sm" label="Offline now" /> : null}
              </View>
              <Text variant="caption" tone="muted">
                Starts {shortTime(o.start)} · ends about {shortTime(o.end)} · {o.spareSockets} sockets to spare
              </Text>
              {o.lateH !== null ? (
                <Text variant="caption" tone={o.lateH > 0 ? 'danger' : 'muted'}>
                  {o.lateH > 0 ? `${latenessWords(o.lateH)} after the due date.` : 'Ends by the due date.'}
                </Text>
              ) : null}
              {o.delayReasons.map((r) => (
                <Text key={r} variant="caption" tone="attention">
                  Waits: {r}
                </Text>
              ))}
              <Button
                size="sm"
                variant={i === 0 ? 'primary' : 'secondary'}
                label={`Book on ${o.rigCode}`}
                disabled={(blocks && !reasonOk) || !deviationOk}
                busy={book.isPending && book.variables?.rigId === o.rigId}
                busyLabel="Booking…"
                onPress={() => onBook(o)}
              />
            </View>
          ))}
          {!parts && !result.options.length && !result.problems.length ? (
            <Banner tone="warn">
              No rig can take this run. The reasons per rig are below; a sample larger than any one rig can be split across two rigs.
            </Banner>
          ) : null}
          {result.refusals.length ? (
            <View style={{ gap: space.xs }}>
              <Text variant="label">Rigs that cannot take it</Text>
              {result.refusals.map((r) => (
                <View key={r.rigId} style={{ gap: 2 }}>
                  <Text variant="caption" style={{ fontWeight: '600' }}>
                    {r.rigCode}
                  </Text>
                  {r.reasons.map((x) => (
                    <Text key={x} variant="caption" tone="muted">
                      {x}
                    </Text>
                  ))}
                </View>
              ))}
            </View>
          ) : null}
          {book.isError ? <Banner tone="danger">{describeError(book.error)}</Banner> : null}
        </View>
      ) : null}
    </Card>
  );
}
