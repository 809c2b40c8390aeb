import { useEffect, useState } from 'react';
import type { Alarm } from '@/shared/schemas/alarms';
import { describeError, isApiError } from '@/components/queries/api';
import { useAcknowledgeAlarm } from '@/components/queries/alarms';
import { Banner } from '@/components/ui/Banner';
import { ConfirmDialog } from '@/components/ui/ConfirmDialog';
import { Field } from '@/components/ui/Field';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { Text } from '@/components/ui/Text';
import { whereText } from './alarm-format';

interface Props {
  alarm: Alarm | null;
  onClose: () => void;
  onDone: (a: Alarm) => void;
}

/** Acknowledge one alarm with a note (what was checked or done). */
export function AcknowledgeDialog({ alarm, onClose, onDone }: Props) {
  const ack = useAcknowledgeAlarm();
  const [note, setNote] = useState('');
  useEffect(() => {
    setNote('');
    ack.reset();
    // eslint-disable-next-line react-hooks/exhaustive-deps -- reset when another alarm opens; `ack` is a new object every render
  }, [alarm?.id]);
  const fieldError = isApiError(ack.error) ? ack.error.fieldErrors().note : undefined;
  const tooShort = note.trim().length < 3;
  const submit = () => {
    if (!alarm || tooShort) return;
    ack.mutate({ id: alarm.id, body: { note: note.trim() } }, { onSuccess: (a) => onDone(a) });
  };
  return (
    <ConfirmDialog
      visible={alarm !== null}
      title={alarm ? `Acknowledge: ${alarm.title}` : ''}
      message={
        alarm ? `${whereText(alarm)}. Say what you checked or did; the note is kept with the alarm and in the audit log.` : undefined
      }
      confirmLabel="Acknowledge"
      onConfirm={submit}
      onCancel={onClose}
      busy={ack.isPending}
      confirmDisabled={tooShort}
      testID="acknowledge-dialog"
    >
      {alarm?.kind === 'runaway-trip' ? (
        <SafetyCaution compact context="Leave a tripped socket de-energised until its heat sinking and bias are checked." />
      ) : null}
      {alarm?.active ? (
        <Text variant="caption" tone="muted">
          The condition is still present: acknowledging records that someone is on it; the alarm clears by itself when the condition goes
          away.
        </Text>
      ) : null}
      <Field
        label="Note"
        value={note}
        onChangeText={setNote}
        multiline
        numberOfLines={3}
        maxLength={1000}
        placeholder="e.g. Socket left off; heat sink clamp found loose, reported to maintenance."
        error={fieldError}
        help="At least 3 characters."
        testID="acknowledge-note"
      />
      {ack.isError && !fieldError ? <Banner tone="danger">{describeError(ack.error)}</Banner> : null}
    </ConfirmDialog>
  );
}
