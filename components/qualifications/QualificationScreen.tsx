/**
 * One qualification: the matrix of stress groups × lots (cards on a phone, a grid from 1024 px),
 * what is left and the projected finish, the report downloads, a cell's drift chart (its runs), and
 * — for engineers — a cell's planned sample, a waiver with its reason, an outside result for a group
 * with no run here, and the withdrawal of a waiver or outside result (kept on record).
 */
import { router, useLocalSearchParams, type Href } from 'expo-router';
import { useState } from 'react';
import { Pressable, View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { qualificationReportUrl, useChangeCell, useQualification } from '@/components/queries/qualifications';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { downloadReport } from '@/components/trends/exportReport';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { LOT_VERDICT_LABEL } from '@/shared/domain/verdicts';
import type { QualGroup } from '@/shared/qualification/templates';
import { CELL_STATE_LABEL, QUAL_STATUS_LABEL, WAIVER_REASON_MIN, WITHDRAWN_RECORD_LABEL, basisWords } from '@/shared/qualification/words';
import type { QualCellView, QualificationDetail } from '@/shared/schemas/qualifications';
import { CellDrift } from './CellDrift';
import { CELL_TONE, STATUS_TONE } from './labels';
import { WithdrawRecord } from './WithdrawRecord';

const sampleText = (c: QualCellView) =>
  c.sample
    ? `${c.sample.failures} failed of ${c.sample.judged} judged (planned ${c.plannedSample}, accept ${c.acceptNumber})`
    : `planned ${c.plannedSample}, accept ${c.acceptNumber}`;

function CellBox({ c, selected, onPress }: { c: QualCellView; selected: boolean; onPress: () => void }) {
  const t = tones[CELL_TONE[c.state]];
  return (
    <Pressable
      onPress={onPress}
      accessibilityRole="button"
      accessibilityLabel={`${c.groupKey} on lot ${c.lotCode}: ${CELL_STATE_LABEL[c.state]}`}
      testID={`qual-cell-${c.groupKey}-${c.lotCode}`}
      style={{
        flex: 1,
        minHeight: 64,
        padding: space.xs,
        borderRadius: radius.md,
        backgroundColor: t.bg,
        borderWidth: selected ? 2 : 1,
        borderColor: selected ? colors.focus : t.edge,
        gap: 2,
      }}
    >
      <Text variant="label" style={{ color: t.fg }}>
        {CELL_STATE_LABEL[c.state]}
      </Text>
      <Text variant="caption" numberOfLines={2}>
        {c.sample ? `${c.sample.failures} / ${c.sample.judged} of ${c.plannedSample}` : `n ${c.plannedSample}, c ${c.acceptNumber}`}
      </Text>
    </Pressable>
  );
}

function Grid({ d, selected, onSelect }: { d: QualificationDetail; selected: string | null; onSelect: (id: string) => void }) {
  const rows = groupsInOrder(d);
  return (
    <View style={{ gap: space.xs }} testID="qual-matrix-grid">
      <View style={{ flexDirection: 'row', gap: space.xs }}>
        <Text variant="label" style={{ width: 260 }}>
          Stress group
        </Text>
        {d.lots.map((l) => (
          <Text key={l.id} variant="label" style={{ flex: 1 }}>
            Lot {l.code}
          </Text>
        ))}
      </View>
      {rows.map((g) => (
        <View key={g.key} style={{ flexDirection: 'row', gap: space.xs, alignItems: 'stretch' }}>
          <View style={{ width: 260, gap: 2 }}>
            <Text variant="bodyStrong">{g.name}</Text>
            <Text variant="caption" tone="muted">
              {g.method}
              {g.preconditioned ? ' · preconditioned first' : ''}
            </Text>
          </View>
          {d.lots.map((l) => {
            const c = d.cells.find((x) => x.groupKey === g.key && x.lotId === l.id);
            return c ? (
              <CellBox key={l.id} c={c} selected={selected === c.id} onPress={() => onSelect(c.id)} />
            ) : (
              <View key={l.id} style={{ flex: 1, justifyContent: 'center' }}>
                <Text variant="caption" tone="muted">
                  not asked
                </Text>
              </View>
            );
          })}
        </View>
      ))}
    </View>
  );
}

function Cards({ d, selected, onSelect }: { d: QualificationDetail; selected: string | null; onSelect: (id: string) => void }) {
  return (
    <View style={{ gap: space.sm }} testID="qual-matrix-cards">
      {groupsInOrder(d).map((g) => (
        <Card key={g.key} title={g.name} description={`${g.method}${g.preconditioned ? ' · preconditioned first' : ''}`} padding="md">
          <View style={{ gap: space.xs }}>
            {d.cells
              .filter((c) => c.groupKey === g.key)
              .map((c) => (
                <View key={c.id} style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center' }}>
                  <Text variant="label" style={{ width: 92 }}>
                    {c.lotCode}
                  </Text>
                  <CellBox c={c} selected={selected === c.id} onPress={() => onSelect(c.id)} />
                </View>
              ))}
          </View>
        </Card>
      ))}
    </View>
  );
}

function groupsInOrder(d: QualificationDetail): QualGroup[] {
  const keys = [...new Set(d.cells.map((c) => c.groupKey))];
  return keys.map((k) => d.groups.find((g) => g.key === k)!).filter(Boolean);
}

function CellEditor({ d, c }: { d: QualificationDetail; c: QualCellView }) {
  const change = useChangeCell(d.id);
  const [sample, setSample] = useState(String(c.plannedSample));
  const [reason, setReason] = useState('');
  const [result, setResult] = useState<'pass' | 'fail' | undefined>(undefined);
  const [by, setBy] = useState('');
  const [at, setAt] = useState('');
  const [doc, setDoc] = useState('');
  const live = c.runs.filter((r) => r.state !== 'aborted').length;
  return (
    <View style={{ gap: space.md }} testID="qual-cell-editor">
      {!c.waiver ? (
        <View style={{ gap: space.xs }}>
          <Field label="Planned sample" keyboardType="number-pad" value={sample} onChangeText={setSample} testID="qual-cell-sample" />
          <Button
            label="Save sample"
            size="sm"
            disabled={!/^\d+$/.test(sample) || Number(sample) === c.plannedSample}
            busy={change.isPending && change.variables?.kind === 'update'}
            onPress={() => change.mutate({ kind: 'update', cellId: c.id, body: { plannedSample: Number(sample) } })}
            testID="qual-cell-save-sample"
          />
        </View>
      ) : null}
      {!c.waiver ? (
        <View style={{ gap: space.xs }}>
          <Field
            label="Waive this cell: reason"
            multiline
            value={reason}
            onChangeText={setReason}
            help={`At least ${WAIVER_REASON_MIN} characters: why the group may stand without this lot (printed on the report).`}
            testID="qual-cell-waiver-reason"
          />
          <Button
            label="Waive"
            size="sm"
            disabled={reason.trim().length < WAIVER_REASON_MIN}
            busy={change.isPending && change.variables?.kind === 'waiver'}
            onPress={() =>
              change.mutate({ kind: 'waiver', cellId: c.id, body: { reason: reason.trim() } }, { onSuccess: () => setReason('') })
            }
            testID="qual-cell-waive"
          />
        </View>
      ) : null}
      {!c.external && !c.waiver && live === 0 ? (
        <View style={{ gap: space.xs }}>
          <Text variant="label">Record an outside result</Text>
          <SegmentedChoice
            label="Result"
            options={[
              { value: 'pass', label: 'Pass' },
              { value: 'fail', label: 'Fail' },
            ]}
            value={result}
            onChange={setResult}
          />
          <Field label="Tested by (person or laboratory)" value={by} onChangeText={setBy} testID="qual-ext-by" />
          <Field label="Tested on" value={at} onChangeText={setAt} help="Date and time, e.g. 2026-11-02T10:00Z" testID="qual-ext-at" />
          <Field label="Report or document reference" value={doc} onChangeText={setDoc} testID="qual-ext-doc" />
          <Button
            label="Record result"
            size="sm"
            disabled={!result || by.trim().length < 2 || doc.trim().length < 2 || Number.isNaN(Date.parse(at))}
            busy={change.isPending && change.variables?.kind === 'external'}
            onPress={() =>
              change.mutate({
                kind: 'external',
                cellId: c.id,
                body: { result: result!, by: by.trim(), at: new Date(Date.parse(at)).toISOString(), document: doc.trim() },
              })
            }
            testID="qual-ext-record"
          />
        </View>
      ) : null}
      {change.isError ? <Banner tone="danger">{describeError(change.error)}</Banner> : null}
    </View>
  );
}

function CellPanel({ d, c, canEdit, canWithdraw }: { d: QualificationDetail; c: QualCellView; canEdit: boolean; canWithdraw: boolean }) {
  const g = d.groups.find((x) => x.key === c.groupKey)!;
  const [drift, setDrift] = useState(false);
  return (
    <Card title={`${g.name} · lot ${c.lotCode}`} description={`${g.method}: ${g.conditions}`} testID="qual-cell-panel">
      <View style={{ gap: space.sm }}>
        <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center', flexWrap: 'wrap' }}>
          <StatusPill tone={CELL_TONE[c.state]} label={CELL_STATE_LABEL[c.state]} size="sm" testID="qual-cell-state" />
          {c.verdict ? (
            <Text variant="caption" testID="qual-cell-verdict">
              Lot verdict for this stress: {LOT_VERDICT_LABEL[c.verdict]}
            </Text>
          ) : null}
        </View>
        <Text variant="body">{sampleText(c)}</Text>
        {c.verdictReasons.slice(0, 3).map((r) => (
          <Text key={r} variant="caption" tone="muted">
            {r}
          </Text>
        ))}
        {c.fit ? (
          <Text variant="caption">
            FIT {c.fit.fit60.toPrecision(3)} at 60 %, {c.fit.fit90.toPrecision(3)} at 90 % · {c.fit.mechanismLabel}
          </Text>
        ) : null}
        {c.runs.map((r) => (
          <Pressable key={r.id} onPress={() => router.push(`/runs/${r.id}` as Href)} accessibilityRole="link">
            <Text variant="caption" style={{ color: colors.focus }}>
              Run {r.code} · {r.rigCode ?? 'no rig'} · {r.state} · {Math.round(r.stressHours)} h
              {r.projectedEnd ? ` · ends ${formatDateTime(r.projectedEnd)}` : ''}
            </Text>
          </Pressable>
        ))}
        {c.planKind === null && !c.external ? (
          <Text variant="caption" tone="muted">
            No run kind: this group takes a result recorded from outside (who, when, pass or fail, document).
          </Text>
        ) : null}
        {c.external ? (
          <Text variant="caption" testID="qual-cell-external">
            Outside result: {c.external.result} — {c.external.by}, {formatDateTime(c.external.at)}, document {c.external.document} (recorded
            by {c.external.recordedBy})
          </Text>
        ) : null}
        {c.waiver ? (
          <Text variant="caption" testID="qual-cell-waiver">
            Waived by {c.waiver.by}, {formatDateTime(c.waiver.at)}: “{c.waiver.reason}”
          </Text>
        ) : null}
        {canWithdraw && c.waiver ? <WithdrawRecord qualificationId={d.id} cellId={c.id} record="waiver" /> : null}
        {canWithdraw && c.external ? <WithdrawRecord qualificationId={d.id} cellId={c.id} record="external" /> : null}
        {c.withdrawn.map((w) => (
          <Text key={`${w.record}-${w.at}`} variant="caption" tone="muted" testID="qual-cell-withdrawn">
            Withdrawn {WITHDRAWN_RECORD_LABEL[w.record]} (“{w.text}”, recorded by {w.recordedBy}): withdrawn by {w.by},{' '}
            {formatDateTime(w.at)} — {w.reason}
          </Text>
        ))}
        {c.planKind !== null && c.runs.length > 0 ? (
          <View style={{ gap: space.xs }}>
            <Button
              label={drift ? 'Hide drift chart' : 'Show drift chart'}
              size="sm"
              variant="secondary"
              onPress={() => setDrift((x) => !x)}
              testID="qual-cell-drift-toggle"
            />
            {drift ? <CellDrift qualificationId={d.id} cellId={c.id} /> : null}
          </View>
        ) : null}
        {c.projectedFinish ? <Text variant="caption">Projected finish {formatDateTime(c.projectedFinish)}</Text> : null}
        {c.projectionNote ? (
          <Text variant="caption" tone="muted">
            {c.projectionNote}
          </Text>
        ) : null}
        <Text variant="caption" tone="muted">
          Source: {g.source}. {basisWords(g.basis)}
        </Text>
        {canEdit ? <CellEditor key={c.id} d={d} c={c} /> : null}
      </View>
    </Card>
  );
}

function Detail({ d }: { d: QualificationDetail }) {
  const bp = useBreakpoints();
  const can = useCan();
  const [selected, setSelected] = useState<string | null>(null);
  const cell = d.cells.find((c) => c.id === selected) ?? null;
  const download = (ext: 'pdf' | 'csv') => downloadReport(qualificationReportUrl(d.id, ext), `qualification-${d.code}-report.${ext}`);
  return (
    <View style={{ gap: space.lg }}>
      <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center', flexWrap: 'wrap' }}>
        <StatusPill tone={STATUS_TONE[d.status]} label={QUAL_STATUS_LABEL[d.status]} testID="qual-status" />
        <Text variant="caption" tone="muted">
          {d.cellsDone} of {d.cellsTotal} cells done · {d.deviceTypes.map((t) => t.partNumber).join(', ')}
        </Text>
      </View>
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button label="Download report (PDF)" size="sm" onPress={() => void download('pdf')} testID="qual-download-pdf" />
        <Button label="Download data (CSV)" size="sm" variant="secondary" onPress={() => void download('csv')} testID="qual-download-csv" />
      </View>
      <Text variant="caption" tone="muted" testID="qual-sequence">
        {d.standard}. Order of tests: {d.sequence} {basisWords(d.sequenceBasis)}
      </Text>
      {d.familyRule ? (
        <Banner tone="info" title="Generic-data rule">
          {d.familyRule}
        </Banner>
      ) : null}
      <Text variant="body" testID="qual-projection">
        {d.projectedFinish
          ? `Projected finish ${formatDateTime(d.projectedFinish)}.`
          : d.status === 'in-progress'
            ? 'No projected finish yet.'
            : ''}{' '}
        {d.projectionNote ?? ''}
      </Text>
      {bp.gtTablet ? <Grid d={d} selected={selected} onSelect={setSelected} /> : <Cards d={d} selected={selected} onSelect={setSelected} />}
      {cell ? (
        <CellPanel key={cell.id} d={d} c={cell} canEdit={can('qualification.edit')} canWithdraw={can('qualification.withdraw')} />
      ) : (
        <Text variant="caption" tone="muted">
          Choose a cell for its runs, sample and verdict.
        </Text>
      )}
      {d.left.length ? (
        <Card title={`Left to do (${d.left.length})`} testID="qual-left">
          <View style={{ gap: space.xxs }}>
            {d.left.map((l) => (
              <Text key={l} variant="caption">
                {l}
              </Text>
            ))}
          </View>
        </Card>
      ) : null}
    </View>
  );
}

export function QualificationScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const q = useQualification(id);
  return (
    <Screen width="wide" testID="qualification-screen">
      <Header
        eyebrow="Qualification"
        title={q.data ? `${q.data.code} · ${q.data.name}` : 'Qualification'}
        subtitle={q.data ? q.data.templateName : undefined}
      />
      <SafetyCaution compact context="The stresses of a qualification run at high voltage and in hot ovens." />
      <QueryState query={q} loadingLabel="Loading the matrix…" errorTitle="Could not load the qualification">
        {(d) => <Detail d={d} />}
      </QueryState>
    </Screen>
  );
}
