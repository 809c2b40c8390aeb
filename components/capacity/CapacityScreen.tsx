import { useState } from 'react';
import { View } from 'react-native';
import type { ReplanProposal } from '@/shared/schemas/replan';
import { formatDateTime } from '@/components/common/format';
import { UtilisationChart } from '@/components/charts/LazyCharts';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useAcceptReplan, useReplans, useUtilisation, utilisationCsvUrl } from '@/components/queries/capacity';
import { space } from '@/components/theme/tokens';
import { downloadReport } from '@/components/trends/exportReport';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { byRun, capacitySeries, delayWords, weekLabel } from './capacity-model';

const WEEK_CHOICES = [
  { value: '4', label: '4 weeks' },
  { value: '8', label: '8 weeks' },
  { value: '13', label: '13 weeks' },
] as const;
type Weeks = (typeof WEEK_CHOICES)[number]['value'];

/** Table figures to 0.1 socket-h (the CSV keeps 0.001). */
const oneDecimal = (x: number) => String(+x.toFixed(1));

const optionWords = (p: ReplanProposal) => (p.kind === 'in-place' ? `Stay on ${p.toRigCode}` : `Move to ${p.toRigCode}`);

/** Re-plan proposals after a rig dropped out, then the lab's utilisation per rig and week. */
export function CapacityScreen() {
  return (
    <Screen width="wide" testID="capacity-screen">
      <Header
        eyebrow="Lab capacity"
        title="Capacity and re-planning"
        subtitle="Runs to place again after a rig went offline or into maintenance, and how the rigs' sockets were used week by week."
      />
      <ReplanSection />
      <UtilisationSection />
    </Screen>
  );
}

function ReplanSection() {
  const replans = useReplans();
  const accept = useAcceptReplan();
  const can = useCan();
  const [error, setError] = useState<string | null>(null);
  return (
    <View style={{ gap: space.sm }}>
      <Text variant="heading" heading={2}>
        Re-plan after a rig dropped out
      </Text>
      <SafetyCaution
        compact
        context="A moved run is loaded and started on its new rig by the floor, under that rig's own start permit and interlocks."
        testID="replan-caution"
      />
      {error ? (
        <Banner tone="danger" title="Not accepted" testID="replan-error">
          <Text variant="caption">{error}</Text>
        </Banner>
      ) : null}
      <QueryState
        query={replans}
        loadingLabel="Loading the re-plan proposals…"
        errorTitle="Could not load the re-plan proposals"
        isEmpty={(d) => d.items.length === 0 && d.held.length === 0}
        empty={
          <EmptyState
            title="Nothing to re-plan"
            message="When a rig goes offline or into maintenance, its booked runs are proposed again here."
          />
        }
      >
        {(d) => (
          <View style={{ gap: space.sm }}>
            {d.held.map((h) => (
              <Banner key={h.runId} tone="warn" title={`${h.runCode} waits on ${h.rigCode}`} testID={`held-${h.runCode}`}>
                <Text variant="caption">{h.note}</Text>
              </Banner>
            ))}
            {byRun(d.items).map((g) => (
              <Card key={g.runId} title={g.runCode} description={g.reason} testID={`replan-${g.runCode}`}>
                <View style={{ gap: space.xs }}>
                  {g.options.map((p) => (
                    <View key={p.id} style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm }}>
                      <View style={{ flexGrow: 1, flexShrink: 1, minWidth: 220 }}>
                        <Text variant="bodyStrong">{optionWords(p)}</Text>
                        <Text variant="caption" tone="muted">
                          {formatDateTime(p.startAt)} → {formatDateTime(p.endAt)} · {delayWords(p)}
                          {p.dueAt ? ` (due ${formatDateTime(p.dueAt)})` : ''}
                        </Text>
                      </View>
                      {can('replan.accept') ? (
                        <Button
                          label="Accept"
                          size="sm"
                          variant="primary"
                          accessibilityLabel={`Accept: ${optionWords(p)} for ${g.runCode}`}
                          busy={accept.isPending && accept.variables === p.id}
                          busyLabel="Accepting…"
                          onPress={() => {
                            setError(null);
                            accept.mutate(p.id, { onError: (e) => setError(describeError(e)) });
                          }}
                          testID={`replan-accept-${g.runCode}-${p.toRigCode}`}
                        />
                      ) : null}
                    </View>
                  ))}
                </View>
              </Card>
            ))}
          </View>
        )}
      </QueryState>
    </View>
  );
}

interface WeekRow {
  week: string;
  booked: number;
  stressed: number;
  idle: number;
  lost: number;
}

function UtilisationSection() {
  const [weeks, setWeeks] = useState<Weeks>('8');
  const [rig, setRig] = useState<string>('all');
  const [exportError, setExportError] = useState<string | null>(null);
  const util = useUtilisation(Number(weeks));
  const columns: Column<WeekRow>[] = [
    { key: 'week', title: 'Week of', flex: 1.2, card: 'title', render: (r) => weekLabel(r.week) },
    { key: 'booked', title: 'Booked', align: 'right', render: (r) => oneDecimal(r.booked) },
    { key: 'stressed', title: 'Stressed', align: 'right', render: (r) => oneDecimal(r.stressed) },
    { key: 'idle', title: 'Idle', align: 'right', render: (r) => oneDecimal(r.idle) },
    { key: 'lost', title: 'Lost to faults', align: 'right', flex: 1.2, render: (r) => oneDecimal(r.lost) },
    {
      key: 'share',
      title: 'Stressed share',
      align: 'right',
      flex: 1.2,
      render: (r) => (r.booked > 0 ? `${Math.round((100 * r.stressed) / r.booked)} %` : '—'),
    },
  ];
  return (
    <View style={{ gap: space.sm }}>
      <Text variant="heading" heading={2}>
        Utilisation (socket-hours)
      </Text>
      <SegmentedChoice label="Weeks" options={WEEK_CHOICES} value={weeks} onChange={setWeeks} testID="utilisation-weeks" />
      <QueryState query={util} loadingLabel="Loading utilisation…" errorTitle="Could not load utilisation">
        {(d) => {
          const series = capacitySeries(d, rig === 'all' ? null : rig);
          const rows: WeekRow[] = series.weeks.map((w, i) => ({
            week: w,
            booked: series.booked[i],
            stressed: series.stressed[i],
            idle: series.idle[i],
            lost: series.lost[i],
          }));
          return (
            <View style={{ gap: space.sm }}>
              <SegmentedChoice
                label="Rig"
                options={[{ value: 'all', label: 'All rigs' }, ...d.rigs.map((c) => ({ value: c, label: c }))]}
                value={rig}
                onChange={setRig}
                testID="utilisation-rig"
              />
              <Card>
                <UtilisationChart data={d} rig={rig === 'all' ? null : rig} />
              </Card>
              <DataTable caption="Socket-hours per week" columns={columns} rows={rows} rowKey={(r) => r.week} minTableWidth={640} />
              <Text variant="bodyStrong" testID="turnaround-median">
                {d.turnaround.medianH === null
                  ? 'Median request-to-verdict: no verdicts signed in these weeks.'
                  : `Median request-to-verdict: ${d.turnaround.medianH.toFixed(1)} h over ${d.turnaround.lots.length} lot${d.turnaround.lots.length === 1 ? '' : 's'}.`}
              </Text>
              <View style={{ gap: space.xxs }} testID="utilisation-definitions">
                {Object.values(d.definitions).map((t) => (
                  <Text key={t} variant="caption" tone="muted">
                    {t}
                  </Text>
                ))}
              </View>
              <View style={{ flexDirection: 'row' }}>
                <Button
                  label="Export CSV"
                  accessibilityHint="Downloads socket-hours per rig and week, and the turnaround of each lot"
                  onPress={() =>
                    downloadReport(utilisationCsvUrl(Number(weeks)), 'emberlot-utilisation.csv').catch((e) =>
                      setExportError(describeError(e)),
                    )
                  }
                  testID="utilisation-export"
                />
              </View>
              {exportError ? <Text tone="danger">{exportError}</Text> : null}
            </View>
          );
        }}
      </QueryState>
    </View>
  );
}
