/**
 * Due dates and lateness per run (words and a shape, never colour alone), and the calendar
 * proposal: every booked run re-placed to make the priority-weighted lateness as small as it can
 * (shared/scheduling/tardiness.ts), accepted with one press by an engineer or manager (audited).
 */
import { useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useApplyCalendar, useCalendarProposal } from '@/components/queries/runs';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { StatusShape } from '@/components/ui/StatusShape';
import { Text } from '@/components/ui/Text';
import { PRIORITY_LABEL, isPriority } from '@/shared/domain/priority';
import type { CalendarProposalRun, Timeline, TimelineBar } from '@/shared/schemas/runs';
import { latenessWords } from './timeline-scale';

const priorityWords = (p: number) => (isPriority(p) ? PRIORITY_LABEL[p] : 'Normal');

function Lateness({ lateH }: { lateH: number | null }) {
  const late = (lateH ?? 0) > 0;
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: 4 }}>
      <StatusShape tone={lateH === null ? 'idle' : late ? 'danger' : 'ok'} size={12} />
      <Text variant="caption" tone={late ? 'danger' : 'muted'}>
        {latenessWords(lateH)}
      </Text>
    </View>
  );
}

type DueRow = TimelineBar & { rigCode: string };

/** Open runs with their priority, due date, projected end and lateness (the timeline's own numbers). */
export function DueDatesCard({ data }: { data: Timeline }) {
  const rows: DueRow[] = data.rows
    .flatMap((r) => r.bars.map((b) => ({ ...b, rigCode: r.code })))
    .filter((b) => b.state !== 'finished' && b.state !== 'aborted')
    .sort((a, b) => (b.lateH ?? -1) - (a.lateH ?? -1) || b.priority - a.priority || a.code.localeCompare(b.code));
  const columns: Column<DueRow>[] = [
    { key: 'code', title: 'Run', flex: 1.3, card: 'title', render: (r) => r.code },
    { key: 'rig', title: 'Rig', flex: 0.6, render: (r) => r.rigCode },
    { key: 'priority', title: 'Priority', flex: 0.8, render: (r) => priorityWords(r.priority) },
    { key: 'due', title: 'Due', flex: 1.2, render: (r) => (r.dueAt ? formatDateTime(r.dueAt) : '—') },
    { key: 'end', title: 'Ends about', flex: 1.2, render: (r) => formatDateTime(r.end) },
    { key: 'late', title: 'Lateness', flex: 1.2, render: (r) => <Lateness lateH={r.lateH} /> },
  ];
  return (
    <Card
      title="Due dates and lateness"
      description="Latest first. A late run says so in words, with an octagon mark and a thick end cap on its bar."
    >
      {rows.length ? (
        <DataTable
          rows={rows}
          columns={columns}
          rowKey={(r) => r.runId}
          caption="Due dates and lateness"
          testID="due-dates"
          minTableWidth={720}
        />
      ) : (
        <Text tone="muted">No open runs.</Text>
      )}
    </Card>
  );
}

export function CalendarPanel() {
  const may = useCan();
  const [asked, setAsked] = useState(false);
  const proposal = useCalendarProposal(asked);
  const apply = useApplyCalendar();
  if (!may('run.propose')) return null;
  const p = proposal.data;
  const moved = p?.runs.filter((r) => r.moved) ?? [];
  const columns: Column<CalendarProposalRun>[] = [
    { key: 'code', title: 'Run', flex: 1.3, card: 'title', render: (r) => r.code },
    { key: 'priority', title: 'Priority', flex: 0.8, render: (r) => priorityWords(r.priority) },
    { key: 'due', title: 'Due', flex: 1.1, render: (r) => (r.dueAt ? formatDateTime(r.dueAt) : '—') },
    {
      key: 'now',
      title: 'As booked',
      flex: 1.6,
      render: (r) => (
        <Text variant="caption">{`${r.current.rigCode} · ${formatDateTime(r.current.start)} · ${latenessWords(r.current.lateH)}`}</Text>
      ),
    },
    {
      key: 'new',
      title: 'Proposed',
      flex: 1.6,
      render: (r) => (
        <Text variant="caption">{`${r.proposed.rigCode} · ${formatDateTime(r.proposed.start)} · ${latenessWords(r.proposed.lateH)}`}</Text>
      ),
    },
  ];
  return (
    <Card
      title="Order booked runs by due date"
      description="Re-places every booked run (not yet loaded) so that lateness weighted by priority is as small as it can be; urgent counts 8 times low. Nothing changes until it is accepted."
    >
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label={asked ? 'Propose again' : 'Propose an order'}
          variant="secondary"
          busy={proposal.isFetching}
          busyLabel="Proposing…"
          onPress={() => (asked ? void proposal.refetch() : setAsked(true))}
        />
      </View>
      {proposal.isError ? <Banner tone="danger">{describeError(proposal.error)}</Banner> : null}
      {p ? (
        <View style={{ gap: space.sm }} testID="calendar-proposal">
          <Text>
            {`Weighted lateness as booked: ${p.currentWeightedLateH} h; proposed: ${p.proposedWeightedLateH} h (${p.method === 'exact' ? 'best order found by exhaustive search' : 'heuristic order: apparent tardiness cost with local improvement'}). ${moved.length ? `${moved.length} run${moved.length === 1 ? '' : 's'} would move.` : 'Nothing would move.'}`}
          </Text>
          {p.runs.length ? (
            <DataTable rows={p.runs} columns={columns} rowKey={(r) => r.runId} caption="Calendar proposal" minTableWidth={760} />
          ) : null}
          {p.runs
            .filter((r) => r.currentConflicts.length)
            .map((r) => (
              <Banner key={`c-${r.runId}`} tone="warn" title={`${r.code} as booked breaks the sharing rule`}>
                {`${r.currentConflicts.join(' ')} So it moves to the first window that keeps the rule, even if that is later.`}
              </Banner>
            ))}
          {p.unplaced.map((u) => (
            <Banner key={u.runId} tone="warn" title={`No rig can take ${u.code}`}>
              {u.reasons.join(' ')}
            </Banner>
          ))}
          {moved.length && may('run.reschedule') ? (
            <View style={{ flexDirection: 'row' }}>
              <Button
                label={`Accept the new order (${moved.length} move${moved.length === 1 ? '' : 's'})`}
                variant="primary"
                busy={apply.isPending}
                busyLabel="Moving…"
                onPress={() =>
                  apply.mutate(
                    {
                      moves: moved.map((r) => ({
                        runId: r.runId,
                        rowVersion: r.rowVersion,
                        rigId: r.proposed.rigId,
                        start: r.proposed.start,
                      })),
                    },
                    { onSuccess: () => void proposal.refetch() },
                  )
                }
              />
            </View>
          ) : null}
          {apply.isSuccess ? <Banner tone="ok">{`${apply.data.moved} run${apply.data.moved === 1 ? '' : 's'} moved.`}</Banner> : null}
          {apply.isError ? <Banner tone="danger">{describeError(apply.error)}</Banner> : null}
        </View>
      ) : null}
    </Card>
  );
}
