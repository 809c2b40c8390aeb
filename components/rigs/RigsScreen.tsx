import { useState } from 'react';
import { View } from 'react-native';
import type { Rig, RigWithCredentials } from '@/shared/schemas/rigs';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useRejections, useRevokeRig, useRigs, useRotateCredentials, useTelemetryStats } from '@/components/queries/rigs';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { ConfirmDialog } from '@/components/ui/ConfirmDialog';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { HoldSettingsPanel } from './HoldSettingsPanel';
import { MaintenancePanel, ServiceDatesPanel } from '@/components/forms/LazyForms';
import { RegisterRigForm } from '@/components/forms/LazyForms';
import { SecretReveal } from './SecretReveal';
import { intakeFigures } from './intake-figures';
import { RigServiceSheet } from './RigServiceSheet';

type Pending = { kind: 'rotate'; rig: Rig } | { kind: 'revoke'; rig: Rig } | null;

function IngestHealth() {
  const stats = useTelemetryStats();
  const rej = useRejections();
  return (
    <Card
      title="Telemetry intake"
      description="Counters since the database was created, and the latest refused messages with the reason."
      testID="ingest-health"
    >
      <QueryState query={stats} loadingLabel="Loading counters…" errorTitle="Could not load the counters" loadingVariant="spinner">
        {(s) => (
          <View style={{ gap: space.sm }}>
            {s.live ? (
              <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
                <StatusPill
                  tone={s.live.mqttConnected ? 'ok' : 'danger'}
                  label={s.live.mqttConnected ? 'Broker connected' : 'Broker not connected'}
                  size="sm"
                />
                <StatusPill
                  tone={s.live.databaseOk ? 'ok' : 'danger'}
                  label={s.live.databaseOk ? 'Database writing' : 'Database unavailable — holding messages'}
                  size="sm"
                />
                <StatusPill
                  tone={s.live.buffered > s.live.bufferLimit / 2 ? 'attention' : 'info'}
                  label={`${s.live.buffered} waiting of ${s.live.bufferLimit}`}
                  size="sm"
                />
              </View>
            ) : null}
            {s.live && s.liveSource?.kind === 'leader' ? (
              <Text variant="caption" tone="muted" testID="ingest-live-source">
                {`As reported by the server process that runs the intake, ${Math.round(s.liveSource.ageSeconds)} s ago.`}
              </Text>
            ) : null}
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
              {intakeFigures(s.counters).map((f) => (
                <View key={f.key} style={{ minWidth: 140 }} testID={`intake-${f.key}`}>
                  <Text variant="overline" tone="subtle">
                    {f.label}
                  </Text>
                  <Text variant={f.kind === 'time' ? 'bodyStrong' : 'heading'} tone={f.alert ? 'danger' : 'default'}>
                    {f.value}
                  </Text>
                </View>
              ))}
            </View>
          </View>
        )}
      </QueryState>
      <QueryState
        query={rej}
        loadingLabel="Loading refused messages…"
        errorTitle="Could not load refused messages"
        loadingVariant="spinner"
        isEmpty={(l) => l.length === 0}
        empty={<Text tone="muted">No message has been refused.</Text>}
      >
        {(items) => (
          <View style={{ gap: space.xs }}>
            {items.slice(0, 10).map((r) => (
              <View key={r.id} style={{ gap: 2 }}>
                <Text variant="label">
                  {formatDateTime(r.at)} · {r.rigCode ?? 'unknown rig'}: {r.reason}
                </Text>
                <Text variant="caption" tone="muted" numberOfLines={1}>
                  {r.excerpt}
                </Text>
              </View>
            ))}
          </View>
        )}
      </QueryState>
    </Card>
  );
}

/** Admin (writes) and engineer (reads): the rigs, their MQTT credentials and maintenance. */
export function RigsScreen() {
  const rigs = useRigs();
  const canManage = useCan()('rig.manage');
  const rotate = useRotateCredentials();
  const revoke = useRevokeRig();
  const [registering, setRegistering] = useState(false);
  const [issued, setIssued] = useState<RigWithCredentials | null>(null);
  const [pending, setPending] = useState<Pending>(null);
  const [reason, setReason] = useState('');
  const [notice, setNotice] = useState<string | null>(null);
  const [maintFor, setMaintFor] = useState<Rig | null>(null);

  const close = () => {
    setPending(null);
    setReason('');
    rotate.reset();
    revoke.reset();
  };
  const confirm = () => {
    if (!pending) return;
    if (pending.kind === 'rotate') {
      rotate.mutate(pending.rig.code, {
        onSuccess: (r) => {
          setIssued(r);
          setNotice(null);
          close();
        },
      });
    } else {
      revoke.mutate(
        { code: pending.rig.code, reason },
        {
          onSuccess: (r) => {
            setNotice(
              `Credentials of rig ${r.code} revoked.` +
                (r.disconnectRequested
                  ? ' The broker was asked to disconnect it now.'
                  : ' The broker is not reachable right now; the rig is refused at its next connection.'),
            );
            close();
          },
        },
      );
    }
  };

  const columns: Column<Rig>[] = [
    { key: 'code', title: 'Rig', flex: 1, card: 'title', render: (r) => r.code },
    { key: 'name', title: 'Name', flex: 2, card: 'subtitle', render: (r) => `${r.name}${r.location ? ` · ${r.location}` : ''}` },
    {
      key: 'limits',
      title: 'Sockets · limits',
      flex: 1.8,
      render: (r) => `${r.socketCount} · ${r.maxTempC} °C · ${r.maxVoltageV} V${r.humidityCapable ? ` · ${r.maxHumidityPct} % RH` : ''}`,
    },
    {
      key: 'conn',
      title: 'Connection',
      flex: 1.3,
      render: (r) =>
        !r.active ? (
          <StatusPill tone="idle" label="Decommissioned" size="sm" />
        ) : r.online ? (
          <StatusPill tone="ok" label="Online" size="sm" />
        ) : (
          <StatusPill tone="danger" label="Offline" size="sm" />
        ),
    },
    {
      key: 'cred',
      title: 'Credentials',
      flex: 1.6,
      render: (r) =>
        r.credentialsRevokedAt ? (
          <StatusPill tone="danger" label={`Revoked ${formatDateTime(r.credentialsRevokedAt)}`} size="sm" />
        ) : (
          <View style={{ gap: 2 }}>
            <Text variant="caption">{r.mqttUsername}</Text>
            <Text variant="caption" tone="muted">
              issued {formatDateTime(r.credentialsIssuedAt)}
            </Text>
          </View>
        ),
    },
    {
      key: 'actions',
      title: 'Actions',
      flex: 2.4,
      card: 'actions',
      render: (r) => (
        <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
          <Button
            size="sm"
            variant="secondary"
            label="Maintenance"
            accessibilityLabel={`Maintenance of rig ${r.code}`}
            onPress={() => setMaintFor(r)}
          />
          {canManage ? (
            <>
              <Button
                size="sm"
                label="New secret"
                accessibilityLabel={`Issue a new MQTT secret for rig ${r.code}`}
                onPress={() => setPending({ kind: 'rotate', rig: r })}
              />
              {!r.credentialsRevokedAt ? (
                <Button
                  size="sm"
                  variant="quiet"
                  label="Revoke"
                  accessibilityLabel={`Revoke the credentials of rig ${r.code}`}
                  onPress={() => setPending({ kind: 'revoke', rig: r })}
                />
              ) : null}
            </>
          ) : null}
        </View>
      ),
    },
  ];

  return (
    <Screen width="wide" testID="rigs-screen">
      <Header
        eyebrow="Lab equipment"
        title="Rigs"
        subtitle="The burn-in rigs, their limits, their MQTT credentials and booked maintenance."
        actions={
          canManage && !registering && !issued ? (
            <Button
              label="Register rig"
              variant="primary"
              onPress={() => {
                setNotice(null);
                setRegistering(true);
              }}
              testID="register-rig"
            />
          ) : null
        }
      />
      {issued ? <SecretReveal rigCode={issued.rig.code} credentials={issued.credentials} onDone={() => setIssued(null)} /> : null}
      {notice ? (
        <Banner tone="ok" action={<Button size="sm" variant="quiet" label="Dismiss" onPress={() => setNotice(null)} />}>
          {notice}
        </Banner>
      ) : null}
      {registering ? (
        <RegisterRigForm
          onCancel={() => setRegistering(false)}
          onCreated={(r) => {
            setRegistering(false);
            setIssued(r);
          }}
        />
      ) : null}
      <QueryState
        query={rigs}
        loadingLabel="Loading rigs…"
        errorTitle="Could not load the rigs"
        isEmpty={(l) => l.length === 0}
        empty={
          <EmptyState
            title="No rigs registered"
            message={canManage ? 'Register the first rig to issue its MQTT credentials.' : 'An administrator registers rigs.'}
          />
        }
      >
        {(list) => (
          <DataTable caption="Registered rigs" columns={columns} rows={list} rowKey={(r) => r.id} minTableWidth={860} testID="rigs-table" />
        )}
      </QueryState>
      {maintFor ? (
        <RigServiceSheet title={`Maintenance of rig ${maintFor.code}`} onClose={() => setMaintFor(null)}>
          <MaintenancePanel rig={maintFor} canEdit={canManage} onClose={() => setMaintFor(null)} />
          <ServiceDatesPanel rig={rigs.data?.find((r) => r.id === maintFor.id) ?? maintFor} canEdit={canManage} />
        </RigServiceSheet>
      ) : null}
      <HoldSettingsPanel />
      <IngestHealth />
      <SafetyCaution compact />

      <ConfirmDialog
        visible={pending?.kind === 'rotate'}
        title={`Issue a new secret for rig ${pending?.rig.code ?? ''}?`}
        message="The current secret stops working at once and the rig is disconnected. It can reconnect only after the new secret is installed in its controller."
        confirmLabel="Issue new secret"
        onConfirm={confirm}
        onCancel={close}
        busy={rotate.isPending}
      >
        {rotate.isError ? <Banner tone="danger">{describeError(rotate.error)}</Banner> : null}
      </ConfirmDialog>
      <ConfirmDialog
        visible={pending?.kind === 'revoke'}
        title={`Revoke the credentials of rig ${pending?.rig.code ?? ''}?`}
        message="The rig is disconnected now and refused from then on, so its telemetry stops. Issue a new secret to let it back in."
        confirmLabel="Revoke"
        confirmVariant="danger"
        onConfirm={confirm}
        onCancel={close}
        busy={revoke.isPending}
        confirmDisabled={reason.trim().length < 3}
      >
        <Field
          label="Reason"
          value={reason}
          onChangeText={setReason}
          placeholder="Controller replaced"
          help="Recorded in the audit log"
          testID="revoke-reason"
        />
        {revoke.isError ? <Banner tone="danger">{describeError(revoke.error)}</Banner> : null}
      </ConfirmDialog>
    </Screen>
  );
}
