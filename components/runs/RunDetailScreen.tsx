/**
 * One run: its state and hours, the floor actions (start, pause, resume, read-point hold, abort with
 * a reason), socket loading from a pasted column of serials with every flag shown before saving,
 * the socket map and the audit trail.
 */
import { Link } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { deviceHistoryHref } from '@/components/devices/links';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useLabSettings } from '@/components/queries/lab-settings';
import { SocketFlagsError, useLoadSockets, useRun, useRunAction, useStartPermit } from '@/components/queries/runs';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { ConfirmDialog } from '@/components/ui/ConfirmDialog';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { Fact } from '@/components/ui/Fact';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { bandRange, measureByMs } from '@/shared/domain/standards';
import { DRIVEN_STATES } from '@/shared/domain/run-states';
import { DEFAULT_HOLD_SETTINGS, HOLD_PHASES, HOLD_PHASE_LABEL, holdPhaseText } from '@/shared/holds/words';
import { RUN_ACTIONS, RUN_ACTION_LABEL } from '@/shared/domain/run-states';
import type { RunAction, RunDetail, RunSocket, SocketFlag, SocketLoadResult } from '@/shared/schemas/runs';
import { RUN_STATE_TONE, columnToSocketMap, hours } from './run-look';
import { RunChamberCard } from './RunChamber';
import { RunCyclesCard, socketCyclesText } from './RunCycles';
import { RunMakeUpCard } from './RunMakeUp';
import { countOf } from '@/shared/domain/format';

const AUDIT_LABEL: Record<string, string> = {
  'run.book': 'Booked',
  'run.override': 'Booked despite the plan check',
  'run.load': 'Sockets loaded',
  'run.start': 'Started',
  'run.ambient-reached': 'Chamber reached its set point; stress hours count',
  'run.ambient-overdue': 'Chamber late reaching its set point',
  'run.read-point': 'Read point reached; cooling under bias',
  'run.hold-phase': 'Hold step',
  'run.measurements-done': 'Measurements done; heating again',
  'run.pause': 'Paused',
  'run.resume': 'Resumed',
  'run.stress-complete': 'Stress hours complete; cooling under bias',
  'run.finish': 'Finished',
  'run.abort': 'Aborted',
  'run.replan': 'Moved by re-planning',
  'run.fault': 'Rig fault: a command was refused or not confirmed',
  'run.retry': 'Retried after a fix; heating again',
};

/** A hold step names the step it reached ("Hold: Bias off"). */
function auditLabel(a: RunDetail['audit'][number]): string {
  const to = HOLD_PHASES.find((p) => p === a.details.to);
  if (a.action === 'run.hold-phase' && to)
    return `Hold: ${HOLD_PHASE_LABEL[to]}${a.details.from !== 'bias-off' && to === 'safe-to-open' ? ' (bias off)' : ''}`;
  return AUDIT_LABEL[a.action] ?? a.action;
}

const FLAG_WORD: Record<SocketFlag['problem'], string> = {
  empty: 'Empty',
  duplicate: 'Duplicate',
  'wrong-lot': 'Wrong lot',
  'unknown-serial': 'Unknown serial',
  'in-other-run': 'In another run',
  'socket-taken': 'Socket taken',
  'no-such-socket': 'No such socket',
  'too-many': 'Too many',
};

function Progress({ run }: { run: RunDetail }) {
  const frac = Math.max(0, Math.min(1, run.stressHours / Math.max(run.targetH, 1e-9)));
  return (
    <View style={{ gap: space.xs }}>
      <View
        accessibilityRole="progressbar"
        accessibilityLabel={`${hours(run.stressHours)} of ${hours(run.targetH)} stress hours`}
        accessibilityValue={{ min: 0, max: 100, now: Math.round(frac * 100) }}
        style={{
          height: 14,
          borderRadius: radius.pill,
          backgroundColor: colors.surfaceSunken,
          borderWidth: 1,
          borderColor: colors.border,
          overflow: 'hidden',
        }}
      >
        <View style={{ width: `${frac * 100}%`, height: '100%', backgroundColor: tones.ok.edge }} />
        {run.plan.readPointsH
          .filter((h) => h > 0 && h < run.targetH)
          .map((h) => (
            <View
              key={h}
              style={{
                position: 'absolute',
                left: `${(h / run.targetH) * 100}%`,
                top: 0,
                bottom: 0,
                width: 2,
                backgroundColor: colors.graphite,
              }}
            />
          ))}
      </View>
      <Text variant="caption" tone="muted">
        Read points: {run.plan.readPointsH.map((h) => hours(h)).join(' · ')}
      </Text>
    </View>
  );
}

function stateNote(run: RunDetail): { tone: 'info' | 'warn' | 'danger' | 'ok'; text: string } | null {
  switch (run.state) {
    case 'booked':
      return {
        tone: 'info',
        text: `Booked for ${formatDateTime(run.scheduledStart)} on ${run.rig?.code ?? 'no rig'}. Load the sockets to begin.`,
      };
    case 'loading':
      return { tone: 'info', text: `${run.loadedCount} of ${run.sampleSize} sockets loaded. Start once every device is placed.` };
    case 'heating':
      return {
        tone: 'info',
        text: `Heating since ${formatDateTime(run.heatingSince)}: hours count once the chamber is within ${bandRange(run.plan.chamberC, run.plan.chamberBand)}.`,
      };
    case 'read-hold': {
      if (!run.biasRemovedAt) {
        return {
          tone: 'info',
          text: `Read point ${hours(run.lastReadPointH)} reached. The devices stay biased while the chamber cools; measure them once bias is off.`,
        };
      }
      const measureBy = new Date(measureByMs(Date.parse(run.biasRemovedAt))).toISOString();
      return {
        tone: 'warn',
        text: `Read point ${hours(run.lastReadPointH)}: bias off since ${formatDateTime(run.biasRemovedAt)}. Measure the devices by ${formatDateTime(measureBy)}, then mark the measurements done to heat again.`,
      };
    }
    case 'paused':
      return { tone: 'warn', text: 'Paused: bias is off and no hours count. Resume to heat again.' };
    case 'cooling':
      return {
        tone: 'info',
        text: run.biasRemovedAt
          ? `${run.cycles ? 'Cycle target reached' : 'Stress hours complete'}. Bias is off and the chamber is cooling; the run finishes when it is safe to open.`
          : `${run.cycles ? 'Cycle target reached' : 'Stress hours complete'}. The chamber cools with bias still on; bias comes off at the lab’s temperature, and the run finishes when it is safe to open.`,
      };
    case 'fault':
      return {
        tone: 'danger',
        text: `Rig fault since ${formatDateTime(run.fault?.at ?? run.stateChangedAt)}: ${run.fault?.reason ?? 'the rig refused or did not confirm a command.'} Emberlot is removing bias from the run's sockets and no stress hours count. Find the cause at the rig, then choose Retry after fix (say what was fixed) or abort the run.`,
      };
    case 'aborted':
      return { tone: 'danger', text: `Aborted: ${run.abortReason ?? 'no reason given'}` };
    case 'finished':
      return { tone: 'ok', text: `Finished ${formatDateTime(run.finishedAt)} with ${hours(run.stressHours)}.` };
    default:
      return null;
  }
}

/** Where the hold stands (cooling under bias, bias off, safe to open), with the lab's temperatures and the caution. */
function HoldCard({ run }: { run: RunDetail }) {
  const settings = useLabSettings();
  if (!run.holdPhase) return null;
  const s = settings.data ?? DEFAULT_HOLD_SETTINGS;
  const open = run.holdPhase === 'safe-to-open';
  return (
    <Card title={run.state === 'cooling' ? 'End of stress' : 'Read-point hold'} testID="hold-card">
      <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
        <StatusPill
          tone={open ? 'ok' : run.holdPhase === 'oven-shared' ? 'attention' : 'info'}
          label={HOLD_PHASE_LABEL[run.holdPhase]}
          testID="hold-phase"
        />
        <Text variant="caption" tone="muted">
          since {formatDateTime(run.holdPhaseSince)}
        </Text>
      </View>
      <Text testID="hold-phase-text">{holdPhaseText(run.holdPhase, s, null)}</Text>
      <Text variant="caption" tone="muted">
        {`Lab settings: bias off at ${s.coolUnderBiasToC} °C, safe to open at ${s.safeToOpenC} °C. The rig chart on the floor shows each step.`}
      </Text>
      <SafetyCaution
        compact
        context={
          open
            ? `Safe to open by the lab’s ${s.safeToOpenC} °C setting, yet parts and boards can still be hot.`
            : `Do not open ${run.rig?.code ?? 'the oven'}: it is above the lab’s safe-to-open ${s.safeToOpenC} °C${run.biasRemovedAt ? '' : ' and the devices are still biased'}.`
        }
      />
    </Card>
  );
}

function Actions({ run, may }: { run: RunDetail; may: (a: RunAction) => boolean }) {
  const act = useRunAction(run.id);
  const [abortOpen, setAbortOpen] = useState(false);
  const [abortReason, setAbortReason] = useState('');
  const [startOpen, setStartOpen] = useState(false);
  const [retryOpen, setRetryOpen] = useState(false);
  const [retryReason, setRetryReason] = useState('');
  const [note, setNote] = useState('');
  const actions = run.allowedActions.filter((a): a is Exclude<RunAction, 'load' | 'abort'> => a !== 'load' && a !== 'abort' && may(a));
  if (!RUN_ACTIONS.some(may)) return <Text tone="muted">Operators and engineers start, pause and abort runs.</Text>;
  const run1 = (action: Exclude<RunAction, 'load'>, reason?: string) =>
    act.mutate(
      { action, rowVersion: run.rowVersion, reason },
      {
        onSuccess: () => {
          setNote('');
          setAbortOpen(false);
          setAbortReason('');
          setStartOpen(false);
          setRetryOpen(false);
          setRetryReason('');
        },
      },
    );
  const energises =
    actions.includes('start') || actions.includes('resume') || actions.includes('measurements-done') || actions.includes('retry');
  return (
    <View style={{ gap: space.sm }}>
      {energises ? (
        <SafetyCaution
          compact
          context={`${run.rig?.code ?? 'The rig'} heats to ${run.plan.chamberC} °C${run.plan.biasV ? ` and applies ${run.plan.biasV} V of bias` : ''}.`}
        />
      ) : null}
      {actions.length ? <Field label="Note for the audit trail (optional)" value={note} onChangeText={setNote} /> : null}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
        {actions.map((a) => (
          <Button
            key={a}
            label={RUN_ACTION_LABEL[a]}
            variant={a === 'start' || a === 'resume' || a === 'measurements-done' || a === 'retry' ? 'primary' : 'secondary'}
            busy={act.isPending && act.variables?.action === a}
            busyLabel="Working…"
            disabled={a === 'start' && run.loadedCount !== run.sampleSize}
            onPress={() => {
              act.reset();
              if (a === 'start') setStartOpen(true);
              else if (a === 'retry') setRetryOpen(true);
              else run1(a, note.trim() || undefined);
            }}
          />
        ))}
        {run.allowedActions.includes('abort') && may('abort') ? (
          <Button label="Abort run" variant="danger" onPress={() => setAbortOpen(true)} />
        ) : null}
      </View>
      {act.isError && !abortOpen && !startOpen && !retryOpen ? <Banner tone="danger">{describeError(act.error)}</Banner> : null}
      <StartDialog
        run={run}
        visible={startOpen}
        busy={act.isPending}
        error={act.isError ? describeError(act.error) : null}
        onCancel={() => {
          setStartOpen(false);
          act.reset();
        }}
        onConfirm={() => run1('start', note.trim() || undefined)}
      />
      <ConfirmDialog
        visible={retryOpen}
        title={`Retry ${run.code} after the fix?`}
        message="The run heats again and gets fresh commands; the start checks must pass again. If the rig still refuses, the run goes back into fault. Say what was fixed; it is kept in the audit trail."
        confirmLabel="Retry after fix"
        confirmDisabled={retryReason.trim().length < 5}
        busy={act.isPending}
        testID="retry-dialog"
        onCancel={() => {
          setRetryOpen(false);
          act.reset();
        }}
        onConfirm={() => run1('retry', retryReason.trim())}
      >
        <SafetyCaution
          compact
          context={`${run.rig?.code ?? 'The rig'} heats to ${run.plan.chamberC} °C${run.plan.biasV ? ` and applies ${run.plan.biasV} V of bias` : ''}.`}
        />
        <Field label="What was fixed" value={retryReason} onChangeText={setRetryReason} multiline help="At least 5 characters." />
        {act.isError ? <Banner tone="danger">{describeError(act.error)}</Banner> : null}
      </ConfirmDialog>
      <ConfirmDialog
        visible={abortOpen}
        title={`Abort ${run.code}?`}
        message="Bias goes off and the run ends for good. Say why; the reason is kept in the audit trail."
        confirmLabel="Abort run"
        confirmVariant="danger"
        confirmDisabled={abortReason.trim().length < 5}
        busy={act.isPending}
        onCancel={() => {
          setAbortOpen(false);
          act.reset();
        }}
        onConfirm={() => run1('abort', abortReason.trim())}
      >
        <Field label="Reason" value={abortReason} onChangeText={setAbortReason} multiline help="At least 5 characters." />
        {act.isError ? <Banner tone="danger">{describeError(act.error)}</Banner> : null}
      </ConfirmDialog>
    </View>
  );
}

/**
 * Start asks first: the start permit's checks (each failed one names what is missing; Start stays
 * off while any fails) and the plan's voltage and temperature with the high-voltage and hot-oven
 * caution, which the person confirms.
 */
function StartDialog(p: {
  run: RunDetail;
  visible: boolean;
  busy: boolean;
  error: string | null;
  onCancel: () => void;
  onConfirm: () => void;
}) {
  const { run } = p;
  const permit = useStartPermit(run.id, p.visible);
  const data = permit.data;
  const c = data?.confirm;
  const rh = c?.humidityPct !== null && c?.humidityPct !== undefined ? ` at ${c.humidityPct} % RH` : '';
  return (
    <ConfirmDialog
      visible={p.visible}
      title={`Start ${run.code}?`}
      confirmLabel="Confirm and start"
      confirmDisabled={!data?.ok}
      busy={p.busy}
      testID="start-dialog"
      onCancel={p.onCancel}
      onConfirm={p.onConfirm}
    >
      {permit.isPending ? <Text tone="muted">Checking the start permit…</Text> : null}
      {permit.isError ? <Banner tone="danger">{describeError(permit.error)}</Banner> : null}
      {data ? (
        <View style={{ gap: space.sm }}>
          <View accessibilityLabel="Start checks" style={{ gap: space.xs }}>
            {data.checks.map((k) => (
              <View key={k.key} testID={`permit-${k.key}`} style={{ flexDirection: 'row', gap: space.xs, alignItems: 'flex-start' }}>
                <StatusPill tone={k.ok ? 'ok' : 'danger'} size="sm" label={k.ok ? 'OK' : 'Missing'} />
                <View style={{ flex: 1, gap: 2 }}>
                  <Text variant="label">{k.label}</Text>
                  <Text variant="caption">{k.message}</Text>
                </View>
              </View>
            ))}
          </View>
          {data.ok && c ? (
            <SafetyCaution
              testID="start-confirm-caution"
              context={`Confirm: ${c.rigCode ?? 'the rig'} heats its chamber to ${c.chamberC} °C${rh} and applies ${c.biasText} to ${run.sampleSize} devices.`}
            />
          ) : (
            <Banner tone="danger" testID="start-refused">
              {`${run.code} cannot start until every check passes; nothing has been switched on.`}
            </Banner>
          )}
        </View>
      ) : null}
      {p.error ? <Banner tone="danger">{p.error}</Banner> : null}
    </ConfirmDialog>
  );
}

function Loading({ run }: { run: RunDetail }) {
  const load = useLoadSockets(run.id);
  const [text, setText] = useState('');
  const [first, setFirst] = useState('0');
  const [result, setResult] = useState<Pick<SocketLoadResult, 'flags' | 'summary' | 'stored'> | null>(null);
  const firstN = Number(first);
  const firstOk = Number.isInteger(firstN) && firstN >= 0 && firstN < (run.rig?.socketCount ?? 256);
  const map = firstOk ? columnToSocketMap(text, firstN) : {};
  const count = Object.keys(map).length;
  const send = (dryRun: boolean) =>
    load.mutate(
      { rowVersion: run.rowVersion, sockets: map, dryRun },
      {
        onSuccess: (r) => setResult({ flags: r.flags, summary: r.summary, stored: r.stored }),
        onError: (e) => setResult(e instanceof SocketFlagsError ? { flags: e.flags, summary: e.message, stored: false } : null),
      },
    );
  return (
    <Card
      title="Load sockets"
      description="Scan or paste one serial per line (a spreadsheet column works); line 1 goes into the first socket, a blank line leaves a socket empty."
    >
      <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
        <View style={{ width: 160 }}>
          <Field
            label="First socket"
            keyboardType="number-pad"
            value={first}
            onChangeText={setFirst}
            error={firstOk ? undefined : `0–${(run.rig?.socketCount ?? 256) - 1}`}
          />
        </View>
        <View style={{ flex: 1, minWidth: 220 }}>
          <Field
            label="Serials"
            multiline
            numberOfLines={8}
            value={text}
            onChangeText={(v) => {
              setText(v);
              setResult(null);
            }}
            placeholder={'A0001\nA0002\nA0003'}
            autoCapitalize="characters"
            autoCorrect={false}
            help={`${countOf(count, 'line')} → sockets ${firstN}–${firstN + Math.max(count, 1) - 1}. The run needs ${run.sampleSize} devices.`}
          />
        </View>
      </View>
      {run.socketsTaken.length ? (
        <Text variant="caption" tone="muted">
          Sockets in use by another run on {run.rig?.code}: {run.socketsTaken.join(', ')}.
        </Text>
      ) : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label="Check"
          disabled={!count || !firstOk}
          busy={load.isPending && load.variables?.dryRun}
          busyLabel="Checking…"
          onPress={() => send(true)}
        />
        <Button
          label="Save loading"
          variant="primary"
          disabled={!count || !firstOk}
          busy={load.isPending && !load.variables?.dryRun}
          busyLabel="Saving…"
          onPress={() => send(false)}
        />
      </View>
      {load.isError && !(load.error instanceof SocketFlagsError) ? <Banner tone="danger">{describeError(load.error)}</Banner> : null}
      {result ? (
        <View style={{ gap: space.xs }} testID="socket-flags">
          <Banner tone={result.flags.some((f) => f.blocking) ? 'danger' : result.stored ? 'ok' : 'info'}>
            {result.stored ? `Saved. ${result.summary}` : result.summary}
          </Banner>
          {result.flags.map((f) => (
            <View key={`${f.socket}-${f.problem}`} style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
              <StatusPill tone={f.blocking ? 'danger' : 'attention'} size="sm" label={`Socket ${f.socket} · ${FLAG_WORD[f.problem]}`} />
              <Text variant="caption" style={{ flexShrink: 1 }}>
                {f.message}
              </Text>
            </View>
          ))}
        </View>
      ) : null}
    </Card>
  );
}

export function RunDetailScreen({ id }: { id: string }) {
  const query = useRun(id || undefined);
  const can = useCan();
  const may = (a: RunAction) => can(`run.${a}`);
  const socketColumns: Column<RunSocket>[] = [
    { key: 'socket', title: 'Socket', flex: 0.6, card: 'title', render: (s) => `Socket ${s.socket}` },
    {
      key: 'serial',
      title: 'Serial',
      flex: 1,
      render: (s) => (
        <Link
          href={deviceHistoryHref(s.deviceId)}
          accessibilityLabel={`History of device ${s.serial}`}
          testID={`socket-device-${s.socket}`}
        >
          <Text variant="body" tone="info" style={{ textDecorationLine: 'underline' }}>
            {s.serial}
          </Text>
        </Link>
      ),
    },
    { key: 'lot', title: 'Lot', flex: 1, render: (s) => s.lotCode },
    { key: 'hours', title: 'Hours', flex: 0.8, render: (s) => hours(s.accruedHours) },
    ...(query.data?.cycles ? [{ key: 'cycles', title: 'Cycles · last ΔTj', flex: 1.6, render: socketCyclesText }] : []),
    {
      key: 'status',
      title: 'Status',
      flex: 1.2,
      render: (s) =>
        s.tripped ? (
          <StatusPill tone="danger" size="sm" label="Tripped" />
        ) : s.failedAtH !== null ? (
          <StatusPill tone="attention" size="sm" label={`Failed at ${s.failedAtH} h`} />
        ) : (
          <StatusPill tone="ok" size="sm" label="In service" />
        ),
    },
  ];
  return (
    <Screen width="wide" testID="run-detail-screen">
      <QueryState query={query} loadingLabel="Loading the run" errorTitle="The run could not be loaded">
        {(run) => {
          const note = stateNote(run);
          return (
            <View style={{ gap: space.lg }}>
              <Header
                eyebrow={`Run · ${run.rig?.code ?? 'no rig'}`}
                title={run.code}
                subtitle={`${run.plan.name} (v${run.plan.version}) · ${run.partNumber} · ${run.lots.map((l) => l.code).join(', ')}`}
                actions={<StatusPill tone={RUN_STATE_TONE[run.state]} label={run.stateLabel} />}
              />
              {note ? <Banner tone={note.tone}>{note.text}</Banner> : null}
              {run.override ? (
                <Banner tone="warn" title="Booked despite a blocking plan check">
                  {`${run.override.byName ?? 'An engineer'}: “${run.override.reason}”`}
                </Banner>
              ) : null}
              {run.sample ? (
                <Text testID="run-sample" variant="caption" tone={run.sample.bookedSize < run.sample.plannedSize ? 'attention' : 'muted'}>
                  {`Sample: ${run.sample.bookedSize} of the plan's ${run.sample.plannedSize} devices${run.sample.runCodes.length > 1 ? `, split over runs ${run.sample.runCodes.join(' + ')} and judged as one` : ''}.${run.sample.deviation ? ` Deviation recorded: “${run.sample.deviation}”` : ''}`}
                </Text>
              ) : null}
              {run.rig && !run.rig.online && DRIVEN_STATES.includes(run.state) ? (
                <Banner tone="danger">{`${run.rig.code} is offline: no telemetry, so no hours count and commands wait until it is back.`}</Banner>
              ) : null}
              {run.cycles ? <RunCyclesCard cycles={run.cycles} sockets={run.sockets} /> : null}
              {run.chamber || run.chamberCycles ? <RunChamberCard cycles={run.chamberCycles} chamber={run.chamber} /> : null}
              <Card title={run.cycles ? 'Chamber hours' : 'Stress hours'}>
                <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
                  <Fact label="Accrued" value={hours(run.stressHours)} />
                  {run.cycles ? null : (
                    <Fact label="Next read point" value={run.nextReadPointH === null ? 'None left' : hours(run.nextReadPointH)} />
                  )}
                  {run.cycles ? null : <Fact label="Target" value={hours(run.targetH)} />}
                  <Fact
                    label="Chamber"
                    value={`${run.plan.chamberC} °C${run.plan.humidityPct !== null ? ` / ${run.plan.humidityPct} % RH` : ''}`}
                  />
                  <Fact
                    label="Devices"
                    value={`${run.loadedCount} of ${run.sampleSize}${run.trippedCount ? ` · ${run.trippedCount} tripped` : ''}`}
                  />
                </View>
                {run.cycles ? null : <Progress run={run} />}
                <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
                  <Fact label="Booked" value={`${formatDateTime(run.scheduledStart, '—')} → ${formatDateTime(run.scheduledEnd, '—')}`} />
                  <Fact label="Started" value={formatDateTime(run.startedAt, 'Not yet')} />
                  <Fact label="In this state since" value={formatDateTime(run.stateChangedAt)} />
                </View>
              </Card>
              <HoldCard run={run} />
              <RunMakeUpCard runId={run.id} />
              {run.allowedActions.length ? (
                <Card title="Actions">
                  <Actions run={run} may={may} />
                </Card>
              ) : null}
              {may('load') && run.allowedActions.includes('load') ? <Loading run={run} /> : null}
              <Card title="Socket map">
                {run.sockets.length ? (
                  <DataTable
                    rows={run.sockets}
                    columns={socketColumns}
                    rowKey={(s) => String(s.socket)}
                    caption={`Sockets of run ${run.code}`}
                  />
                ) : (
                  <EmptyState title="No devices loaded" message="Load the sockets before the run can start." />
                )}
              </Card>
              <Card title="Audit trail" description="Who changed what, when and why.">
                {run.audit.map((a) => (
                  <View key={a.id} style={{ borderTopWidth: 1, borderColor: colors.border, paddingTop: space.xs, gap: 2 }}>
                    <Text variant="label">{auditLabel(a)}</Text>
                    <Text variant="caption" tone="muted">
                      {formatDateTime(a.at)} · {a.actor}
                    </Text>
                    {a.reason ? <Text variant="caption">“{a.reason}”</Text> : null}
                  </View>
                ))}
              </Card>
            </View>
          );
        }}
      </QueryState>
    </Screen>
  );
}
