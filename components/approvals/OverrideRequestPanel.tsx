/**
 * The engineer's side of a safety override, shown where a blocked plan is booked: ask for an
 * override with a reason, see it wait for a second person holding the safety approval, and book
 * with it once approved (an approved request is used by one booking).
 */
import { useEffect, useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { describeError } from '@/components/queries/api';
import { useOverrideRequests, useRequestOverride } from '@/components/queries/signoff';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Field } from '@/components/ui/Field';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { Banner } from '@/components/ui/Banner';
import { OVERRIDE_REASON_MIN } from '@/shared/domain/reasons';

interface Props {
  planId: string;
  /** The approved request the booking will use, or null while there is none. */
  onApproved: (requestId: string | null) => void;
}

export function OverrideRequestPanel({ planId, onApproved }: Props) {
  const requests = useOverrideRequests({ planId });
  const ask = useRequestOverride();
  const [reason, setReason] = useState('');
  const list = requests.data?.items ?? [];
  const approved = list.find((r) => r.state === 'approved');
  const pending = list.find((r) => r.state === 'pending');
  const refused = list.find((r) => r.state === 'refused');
  const reasonOk = reason.trim().length >= OVERRIDE_REASON_MIN;

  useEffect(() => {
    onApproved(approved?.id ?? null);
  }, [approved?.id, onApproved]);

  if (requests.isPending) return <Text variant="caption">Checking for an override request…</Text>;
  if (approved) {
    return (
      <View style={{ gap: space.xs }} testID="override-approved">
        <StatusPill tone="ok" label="Override approved" size="sm" />
        <Text variant="caption">
          Approved by {approved.decidedBy?.name} on {formatDateTime(approved.decidedAt)} (asked by {approved.requestedBy.name}: “
          {approved.reason}”). This booking uses it.
        </Text>
      </View>
    );
  }
  if (pending) {
    return (
      <View style={{ gap: space.xs }} testID="override-pending">
        <StatusPill tone="attention" label="Waiting for approval" size="sm" />
        <Text variant="caption">
          {pending.requestedBy.name} asked on {formatDateTime(pending.requestedAt)}: “{pending.reason}” A second person holding the safety
          approval decides it under Approvals; you cannot approve your own request.
        </Text>
      </View>
    );
  }
  return (
    <View style={{ gap: space.xs }} testID="override-ask">
      {refused ? (
        <Text variant="caption">
          The last request was refused by {refused.decidedBy?.name}: “{refused.note}”.
        </Text>
      ) : null}
      <Field
        label="Why this plan may run anyway (sent for a second person's approval)"
        multiline
        value={reason}
        onChangeText={setReason}
        help={`At least ${OVERRIDE_REASON_MIN} characters. The request, the approval and the findings' numbers are recorded in the audit trail.`}
        error={reason && !reasonOk ? `Write at least ${OVERRIDE_REASON_MIN} characters` : undefined}
        testID="override-reason"
      />
      <View style={{ flexDirection: 'row' }}>
        <Button
          label="Ask for an override"
          size="sm"
          disabled={!reasonOk}
          busy={ask.isPending}
          busyLabel="Sending…"
          onPress={() => ask.mutate({ planId, reason: reason.trim() }, { onSuccess: () => setReason('') })}
          testID="override-ask-button"
        />
      </View>
      {ask.isError ? <Banner tone="danger">{describeError(ask.error)}</Banner> : null}
    </View>
  );
}
