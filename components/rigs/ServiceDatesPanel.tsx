/**
 * A rig's start-permit dates: when its calibration falls due and when its hardware interlocks were
 * last tested. An admin records each calibration or interlock test; every entry is kept (the
 * maintenance record) and the rig's date moves to it. Runs do not start on a rig whose calibration
 * is past due or whose interlock test is older than INTERLOCK_TEST_VALID_DAYS.
 */
import { useState } from 'react';
import { plainFieldMessage } from '@/shared/domain/api-error';
import { View } from 'react-native';
import { INTERLOCK_TEST_VALID_DAYS } from '@/shared/domain/standards';
import { RIG_SERVICE_LABEL, serviceRecordInputSchema, type Rig, type RigServiceKind } from '@/shared/schemas/rigs';
import { Columns } from '@/components/layout/Content';
import { describeError } from '@/components/queries/api';
import { useAddServiceRecord, useServiceRecords } from '@/components/queries/rigs';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';

const day = (iso: string | null) => (iso ? iso.slice(0, 10) : 'not recorded');
type Errors = Partial<Record<'doneOn' | 'dueOn' | 'note', string>>;

function Entry({ rig, kind }: { rig: Rig; kind: RigServiceKind }) {
  const add = useAddServiceRecord(rig.code);
  const [doneOn, setDoneOn] = useState('');
  const [dueOn, setDueOn] = useState('');
  const [note, setNote] = useState('');
  const [errors, setErrors] = useState<Errors>({});
  const submit = () => {
    const parsed = serviceRecordInputSchema.safeParse(kind === 'calibration' ? { kind, doneOn, dueOn, note } : { kind, doneOn, note });
    if (!parsed.success) {
      const next: Errors = {};
      for (const i of parsed.error.issues) next[i.path[0] as keyof Errors] ??= plainFieldMessage(i.message);
      setErrors(next);
      return;
    }
    setErrors({});
    add.mutate(parsed.data, {
      onSuccess: () => {
        setDoneOn('');
        setDueOn('');
        setNote('');
      },
    });
  };
  const tag = kind === 'calibration' ? 'cal' : 'ilk';
  return (
    <View style={{ gap: space.xs }}>
      <Text variant="heading">{kind === 'calibration' ? 'Record a calibration' : 'Record an interlock test'}</Text>
      <Columns>
        <Field
          label="Done on"
          value={doneOn}
          onChangeText={setDoneOn}
          placeholder="2026-12-01"
          error={errors.doneOn}
          testID={`${tag}-done`}
        />
        {kind === 'calibration' ? (
          <Field
            label="Next due on"
            value={dueOn}
            onChangeText={setDueOn}
            placeholder="2027-06-01"
            error={errors.dueOn}
            testID={`${tag}-due`}
          />
        ) : (
          <Field
            label="Note (optional)"
            value={note}
            onChangeText={setNote}
            placeholder="Door, over-temperature and HV interlocks"
            error={errors.note}
            testID={`${tag}-note`}
          />
        )}
      </Columns>
      {add.isError ? <Banner tone="danger">{describeError(add.error)}</Banner> : null}
      <Button
        label={kind === 'calibration' ? 'Record calibration' : 'Record interlock test'}
        variant="secondary"
        onPress={submit}
        busy={add.isPending}
        busyLabel="Recording…"
      />
    </View>
  );
}

export function ServiceDatesPanel({ rig, canEdit }: { rig: Rig; canEdit: boolean }) {
  const records = useServiceRecords(rig.code);
  const now = Date.now();
  const calOk = !!rig.calibrationDueAt && Date.parse(rig.calibrationDueAt) + 86_400_000 > now;
  const ilkOk = !!rig.interlockDueAt && Date.parse(rig.interlockDueAt) > now;
  return (
    <Card
      title={`Start permit dates · ${rig.code}`}
      description={`A run starts only on a rig whose calibration is not past due and whose interlocks were tested within ${INTERLOCK_TEST_VALID_DAYS} days. These dates do not replace the lab's own safety rules.`}
      testID="service-panel"
    >
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        <StatusPill tone={calOk ? 'ok' : 'danger'} label={`Calibration due ${day(rig.calibrationDueAt)}`} />
        <StatusPill tone={ilkOk ? 'ok' : 'danger'} label={`Interlocks tested ${day(rig.interlockTestedAt)}`} />
      </View>
      <QueryState
        query={records}
        loadingLabel="Loading the record…"
        errorTitle="Could not load the record"
        isEmpty={(l) => l.length === 0}
        empty={<Text tone="muted">Nothing recorded yet.</Text>}
      >
        {(items) => (
          <View style={{ gap: space.xxs }}>
            {items.slice(0, 6).map((r) => (
              <Text key={r.id} variant="caption">
                {`${RIG_SERVICE_LABEL[r.kind]} on ${day(r.doneAt)}${r.dueAt ? `, next due ${day(r.dueAt)}` : ''}${r.byName ? ` · ${r.byName}` : ''}${r.note ? ` · ${r.note}` : ''}`}
              </Text>
            ))}
          </View>
        )}
      </QueryState>
      {canEdit ? (
        <View style={{ gap: space.md }}>
          <Entry rig={rig} kind="calibration" />
          <Entry rig={rig} kind="interlock-test" />
        </View>
      ) : null}
    </Card>
  );
}
