/**
 * What a read point still lacks: every device needs a reading (measured or dead) or a disposition
 * (lost, damaged in handling, excluded; after a trip: failure or re-seated). Lists the devices
 * still missing, lets the floor record a disposition, and an engineer confirm readings whose
 * measuring conditions differ from time zero.
 */
import { useState } from 'react';
import { View } from 'react-native';
import { describeError } from '@/components/queries/api';
import { useMe } from '@/components/queries/auth';
import { useConfirmReading, useRecordDisposition, useRunCoverage, useWithdrawDisposition } from '@/components/queries/evidence';
import { useReadPointReadings } from '@/components/queries/measurements';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { DISPOSITION_KINDS, DISPOSITION_LABEL, DISPOSITION_REASON_MIN, CONFIRM_REASON_MIN, type DispositionKind } from '@/shared/evidence';

export function CoveragePanel({ runId, hours }: { runId: string; hours: number }) {
  const coverage = useRunCoverage(runId);
  const readings = useReadPointReadings(runId, hours);
  const me = useMe();
  const record = useRecordDisposition(runId);
  const confirm = useConfirmReading();
  const withdraw = useWithdrawDisposition();
  const [withdrawNote, setWithdrawNote] = useState('');
  const [serial, setSerial] = useState('');
  const [kind, setKind] = useState<DispositionKind | undefined>();
  const [reason, setReason] = useState('');
  const [confirmNote, setConfirmNote] = useState('');
  const [done, setDone] = useState<string | null>(null);
  const isEngineer = me.data?.role === 'engineer';

  const submit = () => {
    if (!kind) return;
    setDone(null);
    record.mutate(
      { serial: serial.trim(), readPointH: hours, kind, reason: reason.trim() },
      {
        onSuccess: (d) => {
          setDone(`${d.serial}: ${d.kindLabel} from ${d.readPointH} h, recorded by ${d.byName}.`);
          setSerial('');
          setReason('');
          setKind(undefined);
        },
      },
    );
  };
  const flagged = (readings.data ?? []).filter((r) => r.conditionsFlag && !r.confirmedAt);

  return (
    <Card
      title={`Read point ${hours} h: is every device accounted for?`}
      description="A read point counts only when each device has a reading (measured, open, short or no reading) or a recorded disposition."
      testID="readings-coverage"
    >
      <QueryState query={coverage} loadingLabel="Checking the read point…" errorTitle="Could not check the read point">
        {(c) => {
          const rp = c.readPoints.find((p) => p.readPointH === hours);
          if (!rp) return <Text tone="muted">This read point is not in the plan.</Text>;
          return (
            <View style={{ gap: space.sm }}>
              <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' }}>
                <StatusPill
                  tone={rp.complete ? 'ok' : 'attention'}
                  label={rp.complete ? 'Complete' : `Incomplete: ${rp.missing.length} missing`}
                  testID="coverage-status"
                />
                <Text variant="caption" tone="muted">
                  {`${rp.expected} devices: ${rp.measured} measured, ${rp.catastrophic} dead (open, short or no reading), ${rp.disposed} with a disposition${rp.deadEarlier ? `, ${rp.deadEarlier} dead earlier` : ''}${rp.unconfirmed ? `, ${rp.unconfirmed} flagged and not yet confirmed` : ''}.`}
                </Text>
              </View>
              {rp.missing.length ? (
                <Text variant="caption" testID="coverage-missing">
                  {`Missing: ${rp.missing.map((x) => x.serial).join(', ')}`}
                </Text>
              ) : null}
              {c.dispositions.length ? (
                <View style={{ gap: 2 }}>
                  <Text variant="label">Dispositions in this run</Text>
                  {c.dispositions.map((d) => (
                    <View key={d.id} style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' }}>
                      <Text variant="caption">{`${d.serial} · ${d.kindLabel} from ${d.readPointH} h · ${d.reason} (${d.byName}, ${new Date(d.at).toLocaleString('en-GB')})`}</Text>
                      {isEngineer ? (
                        <Button
                          size="sm"
                          variant="quiet"
                          label={`Withdraw ${d.serial}`}
                          disabled={withdrawNote.trim().length < DISPOSITION_REASON_MIN}
                          busy={withdraw.isPending && withdraw.variables?.id === d.id}
                          busyLabel="Withdrawing…"
                          onPress={() =>
                            withdraw.mutate({ id: d.id, reason: withdrawNote.trim() }, { onSuccess: () => setWithdrawNote('') })
                          }
                        />
                      ) : null}
                    </View>
                  ))}
                  {isEngineer ? (
                    <View style={{ maxWidth: 420 }}>
                      <Field
                        label="Why withdraw a disposition (engineer)"
                        value={withdrawNote}
                        onChangeText={setWithdrawNote}
                        help="Recorded in the audit trail with what the disposition said."
                      />
                    </View>
                  ) : null}
                  {withdraw.isError ? <Banner tone="danger">{describeError(withdraw.error)}</Banner> : null}
                </View>
              ) : null}
            </View>
          );
        }}
      </QueryState>

      <View style={{ gap: space.sm }} testID="disposition-form">
        <Text variant="label">Record a disposition</Text>
        <View style={{ maxWidth: 240 }}>
          <Field
            label="Serial"
            value={serial}
            onChangeText={setSerial}
            autoCapitalize="characters"
            accessibilityLabel="Disposition serial"
          />
        </View>
        <SegmentedChoice
          label="What happened"
          options={DISPOSITION_KINDS.map((k) => ({ value: k, label: DISPOSITION_LABEL[k] }))}
          value={kind}
          onChange={setKind}
          help="Trip outcomes (failure, re-seated) are only for a device whose socket tripped."
          testID="disposition-kind"
        />
        <Field
          label="Reason"
          multiline
          value={reason}
          onChangeText={setReason}
          accessibilityLabel="Disposition reason"
          help={`At least ${DISPOSITION_REASON_MIN} characters; your name and the time are recorded with it.`}
        />
        <View style={{ flexDirection: 'row' }}>
          <Button
            label="Record disposition"
            variant="secondary"
            disabled={!kind || !serial.trim() || reason.trim().length < DISPOSITION_REASON_MIN}
            busy={record.isPending}
            busyLabel="Recording…"
            onPress={submit}
            testID="disposition-save"
          />
        </View>
        {record.isError ? (
          <Banner tone="danger" title="Not recorded">
            {describeError(record.error)}
          </Banner>
        ) : null}
        {done ? (
          <Banner tone="ok" title="Recorded">
            {done}
          </Banner>
        ) : null}
      </View>

      {flagged.length ? (
        <View style={{ gap: space.xs }} testID="flagged-readings">
          <Text variant="label">Readings measured under other conditions than time zero (not judged until confirmed)</Text>
          {flagged.map((r) => (
            <View key={r.id} style={{ gap: 2 }}>
              <Text variant="caption">{`${r.serial}: ${r.conditionsFlag}`}</Text>
              {isEngineer ? (
                <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap', alignItems: 'flex-end' }}>
                  <View style={{ flexGrow: 1, flexBasis: 220 }}>
                    <Field label={`Why ${r.serial} may be judged`} value={confirmNote} onChangeText={setConfirmNote} />
                  </View>
                  <Button
                    size="sm"
                    label={`Confirm ${r.serial}`}
                    disabled={confirmNote.trim().length < CONFIRM_REASON_MIN}
                    busy={confirm.isPending && confirm.variables?.id === r.id}
                    busyLabel="Confirming…"
                    onPress={() => confirm.mutate({ id: r.id, reason: confirmNote.trim() }, { onSuccess: () => setConfirmNote('') })}
                  />
                </View>
              ) : (
                <Text variant="caption" tone="muted">
                  An engineer confirms it.
                </Text>
              )}
            </View>
          ))}
          {confirm.isError ? <Banner tone="danger">{describeError(confirm.error)}</Banner> : null}
        </View>
      ) : null}
    </Card>
  );
}
