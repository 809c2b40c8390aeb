/**
 * Approvals: the queue of safety overrides waiting for a second person, and the ones decided.
 * Only someone holding the safety-approval grant (People) decides, and never their own request.
 */
import { useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useMe } from '@/components/queries/auth';
import { useDecideOverride, useOverrideRequests } from '@/components/queries/signoff';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { sigFigures } from '@/shared/domain/format';
import { OVERRIDE_REFUSAL_NOTE_MIN } from '@/shared/domain/reasons';
import { OVERRIDE_REQUEST_STATE_LABEL } from '@/shared/domain/signoff';
import type { OverrideRequest } from '@/shared/schemas/approvals';

const TONE = { pending: 'attention', approved: 'ok', refused: 'danger', used: 'idle' } as const;

function Findings({ r }: { r: OverrideRequest }) {
  return (
    <View style={{ gap: space.xxs }}>
      {r.findings.map((f) => (
        <Text key={f.code} variant="caption">
          {f.title}:{' '}
          {Object.values(f.numbers)
            .map((n) => `${n.label} ${sigFigures(n.value)}${n.unit ? ` ${n.unit}` : ''}`)
            .join(' · ')}
        </Text>
      ))}
    </View>
  );
}

function RequestCard({ r, canDecide, own }: { r: OverrideRequest; canDecide: boolean; own: boolean }) {
  const decide = useDecideOverride();
  const [note, setNote] = useState('');
  const noteOk = note.trim().length >= OVERRIDE_REFUSAL_NOTE_MIN;
  return (
    <Card
      title={`${r.plan.name} (version ${r.plan.version}) · ${r.plan.partNumber}`}
      testID={`override-${r.id}`}
      accessibilityLabel={`Override request for ${r.plan.name}`}
    >
      <View style={{ gap: space.sm }}>
        <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap', alignItems: 'center' }}>
          <StatusPill tone={TONE[r.state]} label={OVERRIDE_REQUEST_STATE_LABEL[r.state]} size="sm" />
          <Text variant="caption" tone="muted">
            Asked by {r.requestedBy.name}, {formatDateTime(r.requestedAt)}
          </Text>
        </View>
        <Findings r={r} />
        <Text variant="body">“{r.reason}”</Text>
        {r.decidedBy ? (
          <Text variant="caption" testID="override-decision">
            {r.state === 'refused' ? 'Refused' : 'Approved'} by {r.decidedBy.name}, {formatDateTime(r.decidedAt)}
            {r.note ? `: “${r.note}”` : ''}
          </Text>
        ) : null}
        {r.state === 'pending' && own ? (
          <Text variant="caption" tone="muted">
            You asked for this override; a second person holding the safety approval decides it.
          </Text>
        ) : null}
        {r.state === 'pending' && !own && !canDecide ? (
          <Text variant="caption" tone="muted">
            Deciding needs the safety-approval permission, which an administrator grants on People.
          </Text>
        ) : null}
        {r.state === 'pending' && canDecide && !own ? (
          <View style={{ gap: space.xs }}>
            <Field
              label="Note (required to refuse)"
              multiline
              value={note}
              onChangeText={setNote}
              help={`Approving runs this plan despite the findings above. A refusal needs at least ${OVERRIDE_REFUSAL_NOTE_MIN} characters.`}
              testID="override-note"
            />
            <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
              <Button
                label="Approve override"
                variant="danger"
                size="sm"
                busy={decide.isPending && decide.variables?.decision.decision === 'approve'}
                onPress={() => decide.mutate({ id: r.id, decision: { decision: 'approve', note: note.trim() } })}
                testID="override-approve"
              />
              <Button
                label="Refuse"
                size="sm"
                disabled={!noteOk}
                busy={decide.isPending && decide.variables?.decision.decision === 'refuse'}
                onPress={() => decide.mutate({ id: r.id, decision: { decision: 'refuse', note: note.trim() } })}
                testID="override-refuse"
              />
            </View>
            {decide.isError ? <Banner tone="danger">{describeError(decide.error)}</Banner> : null}
          </View>
        ) : null}
      </View>
    </Card>
  );
}

export function ApprovalsScreen() {
  const me = useMe();
  const all = useOverrideRequests({});
  const canDecide = all.data?.canDecide === true;
  return (
    <Screen width="wide" testID="approvals-screen">
      <Header
        eyebrow="Safety"
        title="Approvals"
        subtitle="Plans booked despite a blocking plan-check finding need a second person's approval. Reverse bias beyond the rated breakdown is never approved."
      />
      <SafetyCaution compact context="An approved override lets a plan run outside the plan check's limits." />
      {all.data && !canDecide ? (
        <Banner tone="info">
          You can read the queue; deciding needs the safety-approval permission, which an administrator grants on People.
        </Banner>
      ) : null}
      <QueryState
        query={all}
        loadingLabel="Loading override requests…"
        errorTitle="Could not load override requests"
        isEmpty={(d) => d.items.length === 0}
        empty={<EmptyState title="No override requests" message="When an engineer asks to run a blocked plan, the request waits here." />}
      >
        {({ items: list }) => {
          const pending = list.filter((r) => r.state === 'pending');
          const done = list.filter((r) => r.state !== 'pending');
          return (
            <View style={{ gap: space.lg }}>
              <View style={{ gap: space.sm }} testID="approvals-queue">
                <Text variant="heading" heading={2}>
                  Waiting ({pending.length})
                </Text>
                {pending.length === 0 ? (
                  <Text variant="caption" tone="muted">
                    Nothing waits for a decision.
                  </Text>
                ) : null}
                {pending.map((r) => (
                  <RequestCard key={r.id} r={r} canDecide={canDecide} own={r.requestedBy.id === me.data?.id} />
                ))}
              </View>
              <View style={{ gap: space.sm }} testID="approvals-decided">
                <Text variant="heading" heading={2}>
                  Decided
                </Text>
                {done.map((r) => (
                  <RequestCard key={r.id} r={r} canDecide={false} own={r.requestedBy.id === me.data?.id} />
                ))}
              </View>
            </View>
          );
        }}
      </QueryState>
    </Screen>
  );
}
