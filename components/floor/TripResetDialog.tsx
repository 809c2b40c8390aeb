import { useEffect, useState } from 'react';
import type { FloorSocket } from '@/shared/schemas/floor';
import type { RigCommandAnswer, TripResetResult } from '@/shared/schemas/protection';
import { describeError, isApiError } from '@/components/queries/api';
import { useResetTrip } from '@/components/queries/protection';
import { Banner } from '@/components/ui/Banner';
import { ConfirmDialog } from '@/components/ui/ConfirmDialog';
import { Field } from '@/components/ui/Field';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { Text } from '@/components/ui/Text';

interface Props {
  socket: FloorSocket | null;
  rigCode: string;
  run: { id: string; code: string } | null;
  onClose: () => void;
  onDone: (r: TripResetResult) => void;
}

/** Reset one tripped socket with a reason: the server re-checks the plan for its device before re-energising. */
export function TripResetDialog({ socket, rigCode, run, onClose, onDone }: Props) {
  const reset = useResetTrip();
  const [reason, setReason] = useState('');
  useEffect(() => {
    setReason('');
    reset.reset();
    // eslint-disable-next-line react-hooks/exhaustive-deps -- reset when another socket opens; `reset` is a new object every render
  }, [socket?.index]);
  const fieldError = isApiError(reset.error) ? reset.error.fieldErrors().reason : undefined;
  const tooShort = reason.trim().length < 10;
  const submit = () => {
    if (!socket || !run || tooShort) return;
    reset.mutate({ runId: run.id, socket: socket.index, body: { reason: reason.trim() } }, { onSuccess: (r) => onDone(r) });
  };
  return (
    <ConfirmDialog
      visible={socket !== null && run !== null}
      title={socket ? `Reset the trip of socket ${socket.index} on ${rigCode}` : ''}
      message={
        socket && run
          ? `Run ${run.code}${socket.serial ? `, device ${socket.serial}` : ''}. Emberlot checks the plan again for this device; only if it passes is the rig told to clear its latch and bias this socket again.`
          : undefined
      }
      confirmLabel="Reset and re-energise"
      confirmVariant="danger"
      onConfirm={submit}
      onCancel={onClose}
      busy={reset.isPending}
      confirmDisabled={tooShort}
      testID="trip-reset-dialog"
    >
      <SafetyCaution
        compact
        context="Re-energise only after the cause of the trip is found and put right; the socket will be at full bias at once."
      />
      {socket?.tripReason ? (
        <Text variant="caption" tone="muted">
          Tripped: {socket.tripReason}
        </Text>
      ) : null}
      <Field
        label="Reason"
        value={reason}
        onChangeText={setReason}
        multiline
        numberOfLines={3}
        maxLength={2000}
        placeholder="e.g. Thermal pad replaced and clamp torque checked; leakage re-measured at 25 °C."
        error={fieldError}
        help="At least 10 characters. Kept in the audit log with the trip's numbers."
        testID="trip-reset-reason"
      />
      {reset.isError && !fieldError ? <Banner tone="danger">{describeError(reset.error)}</Banner> : null}
    </ConfirmDialog>
  );
}

/** The rig's answers to a reset, in words. */
export function rigAnswerText(r: TripResetResult): string {
  const say = (what: string, a: RigCommandAnswer) => (a.status === 'confirmed' ? `${what}: confirmed by the rig` : `${what}: ${a.error}`);
  return `${say('Latch cleared', r.rig.resetTrip)}. ${say('Bias on', r.rig.bias)}.`;
}
