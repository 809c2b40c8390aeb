import { formatDateTime } from '@/components/common/format';
import { MEASURE_WITHIN_H } from '@/shared/domain/standards';
import { timeZeroLocked } from '@/shared/domain/records';
import { useMemo, useState } from 'react';
import { View } from 'react-native';
import type { MeasurementRunSummary } from '@/shared/schemas/measurements';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { useMeasurementRun, useMeasurementRuns } from '@/components/queries/measurements';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { CoveragePanel } from './CoveragePanel';
import { ManualEntryForm } from '@/components/forms/LazyForms';
import { StoredReadingsPanel } from './StoredReadingsPanel';
import { UploadPanel } from './UploadPanel';
import { UploadsPanel } from './UploadsPanel';

/** Runs listed by how soon they need read-point work. */
const STATE_ORDER: readonly string[] = ['read-hold', 'cooling', 'fault', 'paused', 'stressing', 'heating', 'loading', 'booked', 'finished'];

const runLabel = (r: MeasurementRunSummary) => `${r.code} · ${r.lots.map((l) => l.code).join(', ') || r.partNumber} · ${r.state}`;

/** Operator's read-point work: choose run and read point, upload the tester's file or type readings. */
export function ReadingsScreen() {
  const runs = useMeasurementRuns();
  const [runId, setRunId] = useState<string | undefined>();
  const [hours, setHours] = useState<number | undefined>();
  const run = useMeasurementRun(runId);

  const sorted = useMemo(
    () =>
      [...(runs.data ?? [])].sort((a, b) => STATE_ORDER.indexOf(a.state) - STATE_ORDER.indexOf(b.state) || a.code.localeCompare(b.code)),
    [runs.data],
  );

  return (
    <Screen width="wide" testID="readings-screen">
      <Header
        eyebrow="Floor"
        title="Read points"
        subtitle="Store each device's hFE, leakage and saturation voltage when a run stops at a read point."
      />
      <SafetyCaution />
      <QueryState
        query={runs}
        loadingLabel="Loading runs…"
        errorTitle="Could not load runs"
        isEmpty={(l) => l.length === 0}
        empty={<EmptyState title="No runs to measure" message="Runs appear here once they are booked with a socket map." />}
      >
        {() => (
          <View style={{ gap: space.lg }}>
            <SegmentedChoice
              label="Run"
              options={sorted.map((r) => ({ value: r.id, label: runLabel(r) }))}
              value={runId}
              onChange={(v) => {
                setRunId(v);
                setHours(undefined);
              }}
              testID="readings-run"
            />
            {runId ? (
              <QueryState query={run} loadingLabel="Loading the run…" errorTitle="Could not load this run">
                {(r) => {
                  const reached = r.readPoints.filter((p) => p.reached);
                  const later = r.readPoints.filter((p) => !p.reached);
                  const chosen = r.readPoints.find((p) => p.hours === hours);
                  return (
                    <View style={{ gap: space.lg }}>
                      <Card
                        title={`${r.code} · ${r.partNumber}`}
                        description={`${r.planName} · ${r.deviceCount} devices in ${r.rigCode ?? 'no rig'} · ${Math.round(r.stressHours)} stress hours`}
                      >
                        <SegmentedChoice
                          label="Read point"
                          options={reached.map((p) => ({
                            value: String(p.hours),
                            label: `${p.hours} h · ${p.measured}/${r.deviceCount} stored${p.late ? ` · ${p.late} late` : ''}`,
                          }))}
                          value={hours === undefined ? undefined : String(hours)}
                          onChange={(v) => setHours(Number(v))}
                          help={later.length ? `Not reached yet: ${later.map((p) => `${p.hours} h`).join(', ')}.` : undefined}
                          testID="readings-hours"
                        />
                        {r.biasRemovedAt ? (
                          <Text variant="caption" tone="muted">
                            Bias last removed {formatDateTime(r.biasRemovedAt)}. Readings more than {MEASURE_WITHIN_H} h later are flagged
                            late; put the parts back on stress first (JESD22-A108, from memory).
                          </Text>
                        ) : null}
                      </Card>
                      {r.deviceCount === 0 ? (
                        <Banner tone="warn">This run has no socket map yet, so no reading can be matched to a device.</Banner>
                      ) : null}
                      {chosen && r.deviceCount > 0 ? (
                        <>
                          <CoveragePanel key={`c-${r.id}-${chosen.hours}`} runId={r.id} hours={chosen.hours} />
                          <StoredReadingsPanel
                            key={`s-${r.id}-${chosen.hours}`}
                            runId={r.id}
                            hours={chosen.hours}
                            timeZeroLocked={timeZeroLocked({ state: r.state, startedAt: r.startedAt })}
                          />
                          <UploadPanel key={`${r.id}-${chosen.hours}`} runId={r.id} hours={chosen.hours} />
                          <ManualEntryForm key={`m-${r.id}-${chosen.hours}`} runId={r.id} hours={chosen.hours} />
                        </>
                      ) : (
                        <Text tone="muted">Choose a read point to upload or enter readings.</Text>
                      )}
                      {r.deviceCount > 0 ? <UploadsPanel key={`u-${r.id}`} runId={r.id} /> : null}
                    </View>
                  );
                }}
              </QueryState>
            ) : (
              <Text tone="muted">Choose the run whose devices you measured.</Text>
            )}
          </View>
        )}
      </QueryState>
    </Screen>
  );
}
