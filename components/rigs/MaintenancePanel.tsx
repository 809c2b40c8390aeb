import { useState } from 'react';
import { plainFieldMessage } from '@/shared/domain/api-error';
import { View } from 'react-native';
import { maintenanceInputSchema, type Rig } from '@/shared/schemas/rigs';
import { formatDateTime } from '@/components/common/format';
import { Columns } from '@/components/layout/Content';
import { describeError, isApiError } from '@/components/queries/api';
import { useAddMaintenance, useDeleteMaintenance, useMaintenance } from '@/components/queries/rigs';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { Text } from '@/components/ui/Text';

/** "2031-03-04 08:00" in the viewer's time zone → ISO with offset; null when unreadable. */
export function localToIso(text: string): string | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})[ T](\d{1,2}):(\d{2})$/.exec(text.trim());
  if (!m) return null;
  const d = new Date(Number(m[1]), Number(m[2]) - 1, Number(m[3]), Number(m[4]), Number(m[5]));
  return Number.isNaN(d.getTime()) ? null : d.toISOString();
}

type Errors = Partial<Record<'startsAt' | 'endsAt' | 'reason', string>>;

export function MaintenancePanel({ rig, canEdit, onClose }: { rig: Rig; canEdit: boolean; onClose: () => void }) {
  const list = useMaintenance(rig.code);
  const add = useAddMaintenance(rig.code);
  const del = useDeleteMaintenance(rig.code);
  const [startsAt, setStartsAt] = useState('');
  const [endsAt, setEndsAt] = useState('');
  const [reason, setReason] = useState('');
  const [errors, setErrors] = useState<Errors>({});

  const submit = () => {
    const s = localToIso(startsAt);
    const e = localToIso(endsAt);
    const next: Errors = {};
    if (!s) next.startsAt = 'Use the form 2031-03-04 08:00';
    if (!e) next.endsAt = 'Use the form 2031-03-04 17:00';
    const parsed = s && e ? maintenanceInputSchema.safeParse({ startsAt: s, endsAt: e, reason }) : null;
    if (parsed && !parsed.success) for (const i of parsed.error.issues) next[i.path[0] as keyof Errors] ??= plainFieldMessage(i.message);
    if (!parsed?.success) {
      if (!next.reason && reason.trim().length < 3) next.reason = 'Say what the maintenance is for';
      setErrors(next);
      return;
    }
    setErrors({});
    add.mutate(parsed.data, {
      onSuccess: () => {
        setStartsAt('');
        setEndsAt('');
        setReason('');
      },
      onError: (err) => {
        if (isApiError(err) && err.fields) setErrors(err.fieldErrors() as Errors);
      },
    });
  };

  return (
    <Card
      title={`Maintenance · ${rig.code}`}
      description="The scheduler books no run across these windows."
      actions={<Button size="sm" variant="quiet" label="Close" onPress={onClose} />}
      testID="maintenance-panel"
    >
      <QueryState
        query={list}
        loadingLabel="Loading maintenance…"
        errorTitle="Could not load maintenance"
        isEmpty={(l) => l.length === 0}
        empty={
          <EmptyState
            title="No maintenance booked"
            message={canEdit ? 'Book a window below.' : 'An administrator books maintenance windows.'}
          />
        }
      >
        {(items) => (
          <View style={{ gap: space.xs }}>
            {items.map((w) => (
              <View
                key={w.id}
                style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' }}
              >
                <View style={{ flexShrink: 1 }}>
                  <Text variant="bodyStrong">
                    {formatDateTime(w.startsAt)} → {formatDateTime(w.endsAt)}
                  </Text>
                  <Text variant="caption" tone="muted">
                    {w.reason}
                  </Text>
                </View>
                {canEdit ? (
                  <Button
                    size="sm"
                    variant="quiet"
                    label="Delete"
                    accessibilityLabel={`Delete maintenance from ${formatDateTime(w.startsAt)}`}
                    onPress={() => del.mutate(w.id)}
                    busy={del.isPending && del.variables === w.id}
                  />
                ) : null}
              </View>
            ))}
          </View>
        )}
      </QueryState>
      {del.isError ? <Banner tone="danger">{describeError(del.error)}</Banner> : null}
      {canEdit ? (
        <View style={{ gap: space.sm }}>
          <Text variant="heading">Book a window</Text>
          {add.isError && !(isApiError(add.error) && add.error.fields) ? (
            <Banner tone="danger" title="Not booked">
              {describeError(add.error)}
            </Banner>
          ) : null}
          <Columns>
            <Field
              label="Starts"
              value={startsAt}
              onChangeText={setStartsAt}
              placeholder="2031-03-04 08:00"
              error={errors.startsAt}
              help="Your local time"
              testID="mw-start"
            />
            <Field
              label="Ends"
              value={endsAt}
              onChangeText={setEndsAt}
              placeholder="2031-03-04 17:00"
              error={errors.endsAt}
              testID="mw-end"
            />
          </Columns>
          <Field
            label="What for"
            value={reason}
            onChangeText={setReason}
            error={errors.reason}
            placeholder="Thermocouple calibration"
            testID="mw-reason"
          />
          <Button label="Book maintenance" variant="primary" onPress={submit} busy={add.isPending} busyLabel="Booking…" />
        </View>
      ) : null}
    </Card>
  );
}
