/**
 * Withdraw a cell's waiver or outside result: a reason, then a confirmation. The record stays on
 * the cell's history and the report; the cell stands again on its runs.
 */
import { useState } from 'react';
import { View } from 'react-native';
import { describeError } from '@/components/queries/api';
import { useChangeCell } from '@/components/queries/qualifications';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { ConfirmDialog } from '@/components/ui/ConfirmDialog';
import { Field } from '@/components/ui/Field';
import { WAIVER_REASON_MIN, WITHDRAWN_RECORD_LABEL } from '@/shared/qualification/words';
import type { WithdrawableRecord } from '@/shared/schemas/qualifications';

export function WithdrawRecord({
  qualificationId,
  cellId,
  record,
}: {
  qualificationId: string;
  cellId: string;
  record: WithdrawableRecord;
}) {
  const change = useChangeCell(qualificationId);
  const [open, setOpen] = useState(false);
  const [reason, setReason] = useState('');
  const word = WITHDRAWN_RECORD_LABEL[record];
  return (
    <View style={{ gap: space.xs }}>
      <Button label={`Withdraw ${word}`} size="sm" variant="secondary" onPress={() => setOpen(true)} testID={`qual-withdraw-${record}`} />
      <ConfirmDialog
        visible={open}
        title={`Withdraw the ${word}?`}
        message={`The ${word} stays on the cell's record and the report, marked withdrawn with your reason; the cell then stands on its runs again.`}
        confirmLabel="Withdraw"
        confirmVariant="danger"
        busy={change.isPending}
        confirmDisabled={reason.trim().length < WAIVER_REASON_MIN}
        onCancel={() => setOpen(false)}
        onConfirm={() =>
          change.mutate(
            { kind: 'withdraw', cellId, body: { record, reason: reason.trim() } },
            {
              onSuccess: () => {
                setOpen(false);
                setReason('');
              },
            },
          )
        }
        testID="qual-withdraw-dialog"
      >
        <Field
          label="Why is it withdrawn?"
          multiline
          value={reason}
          onChangeText={setReason}
          help={`At least ${WAIVER_REASON_MIN} characters (printed on the report).`}
          testID="qual-withdraw-reason"
        />
        {change.isError ? <Banner tone="danger">{describeError(change.error)}</Banner> : null}
      </ConfirmDialog>
    </View>
  );
}
