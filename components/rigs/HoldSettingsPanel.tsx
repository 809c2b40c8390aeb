/**
 * The lab's hold temperatures: where read-point holds and the end of stress remove bias, and where
 * the chamber counts as safe to open (shared/holds). Everyone with the page sees them; admins change
 * them with a reason (audited).
 */
import { useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { describeError, isApiError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useLabSettings, useUpdateLabSettings } from '@/components/queries/lab-settings';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { Text } from '@/components/ui/Text';
import { HOLD_SETTING_LIMITS } from '@/shared/holds/words';
import type { LabSettings } from '@/shared/schemas/lab-settings';

function EditForm({ s, onDone }: { s: LabSettings; onDone: () => void }) {
  const save = useUpdateLabSettings();
  const [bias, setBias] = useState(String(s.coolUnderBiasToC));
  const [open, setOpen] = useState(String(s.safeToOpenC));
  const [reason, setReason] = useState('');
  const fieldErrors = isApiError(save.error) ? save.error.fieldErrors() : {};
  const num = (v: string) => (v.trim() === '' ? Number.NaN : Number(v));
  return (
    <View style={{ gap: space.sm }} testID="hold-settings-form">
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        <View style={{ minWidth: 200, flexGrow: 1, flexBasis: 200 }}>
          <Field
            label="Remove bias at (°C)"
            keyboardType="decimal-pad"
            value={bias}
            onChangeText={setBias}
            error={fieldErrors.coolUnderBiasToC}
            help={`${HOLD_SETTING_LIMITS.minC}–${HOLD_SETTING_LIMITS.coolUnderBiasToMaxC} °C`}
            testID="hold-bias-off-at"
          />
        </View>
        <View style={{ minWidth: 200, flexGrow: 1, flexBasis: 200 }}>
          <Field
            label="Safe to open at (°C)"
            keyboardType="decimal-pad"
            value={open}
            onChangeText={setOpen}
            error={fieldErrors.safeToOpenC}
            help={`${HOLD_SETTING_LIMITS.minC}–${HOLD_SETTING_LIMITS.safeToOpenMaxC} °C`}
            testID="hold-safe-to-open"
          />
        </View>
      </View>
      <Field
        label="Reason"
        value={reason}
        onChangeText={setReason}
        error={fieldErrors.reason}
        help="Recorded in the audit log"
        testID="hold-reason"
      />
      {save.isError && !Object.keys(fieldErrors).length ? <Banner tone="danger">{describeError(save.error)}</Banner> : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label="Save settings"
          variant="primary"
          busy={save.isPending}
          busyLabel="Saving…"
          testID="hold-save"
          onPress={() => save.mutate({ coolUnderBiasToC: num(bias), safeToOpenC: num(open), reason: reason.trim() }, { onSuccess: onDone })}
        />
        <Button label="Cancel" variant="quiet" onPress={onDone} />
      </View>
    </View>
  );
}

export function HoldSettingsPanel() {
  const settings = useLabSettings();
  const can = useCan();
  const [editing, setEditing] = useState(false);
  return (
    <Card
      title="Read-point holds"
      description="At a read point and at the end of stress the chamber cools with bias still on; bias comes off at the first temperature, and the oven may be opened at the second."
      testID="hold-settings"
    >
      <QueryState
        query={settings}
        loadingLabel="Loading the hold settings…"
        errorTitle="Could not load the hold settings"
        loadingVariant="spinner"
      >
        {(s) => (
          <View style={{ gap: space.sm }}>
            {editing ? (
              <EditForm s={s} onDone={() => setEditing(false)} />
            ) : (
              <>
                <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
                  <View style={{ minWidth: 160 }}>
                    <Text variant="overline" tone="subtle">
                      Remove bias at
                    </Text>
                    <Text variant="heading" testID="hold-bias-off-value">{`${s.coolUnderBiasToC} °C`}</Text>
                  </View>
                  <View style={{ minWidth: 160 }}>
                    <Text variant="overline" tone="subtle">
                      Safe to open at
                    </Text>
                    <Text variant="heading" testID="hold-safe-value">{`${s.safeToOpenC} °C`}</Text>
                  </View>
                </View>
                <Text variant="caption" tone="muted">
                  {s.updatedAt
                    ? `Changed ${formatDateTime(s.updatedAt)}${s.updatedByName ? ` by ${s.updatedByName}` : ''}.`
                    : 'The defaults: bias off within 10 °C of room ambient, open at 40 °C.'}
                </Text>
                {can('lab-settings.manage') ? (
                  <Button label="Change" size="sm" onPress={() => setEditing(true)} testID="hold-edit" />
                ) : null}
              </>
            )}
            <SafetyCaution
              compact
              context="The safe-to-open temperature is the lab's setting; hot parts, sockets and boards can still burn."
            />
          </View>
        )}
      </QueryState>
    </Card>
  );
}
