/**
 * The audit log for admins and managers: filter by person, object and time, export what is shown
 * as CSV, and check the hash chain (each entry carries the hash of the one before; an edit made
 * directly in the database breaks it).
 */
import { useMemo, useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { auditQueryString, useAuditLog, useAuditVerify } from '@/components/queries/signoff';
import { space } from '@/components/theme/tokens';
import { downloadReport } from '@/components/trends/exportReport';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { Text } from '@/components/ui/Text';
import type { AuditEntryView } from '@/shared/schemas/audit';

const DAY = /^\d{4}-\d{2}-\d{2}$/;

/** A local calendar day ("2026-12-04") as the ISO instant of its start, or of its end. */
function dayBound(day: string, end: boolean): string | null {
  if (!DAY.test(day)) return null;
  const [y, m, d] = day.split('-').map(Number);
  const t = end ? new Date(y, m - 1, d, 23, 59, 59, 999) : new Date(y, m - 1, d, 0, 0, 0, 0);
  return Number.isNaN(t.getTime()) ? null : t.toISOString();
}

const detailText = (e: AuditEntryView) => {
  const s = JSON.stringify(e.details);
  return s === '{}' ? '' : s.length > 160 ? `${s.slice(0, 157)}…` : s;
};

const columns: Column<AuditEntryView>[] = [
  { key: 'at', title: 'When', flex: 1.2, card: 'subtitle', render: (e) => formatDateTime(e.at) },
  { key: 'actor', title: 'Person', flex: 1.5, render: (e) => e.actor },
  { key: 'action', title: 'Action', flex: 1.3, card: 'title', render: (e) => e.action },
  { key: 'object', title: 'Object', flex: 1.5, render: (e) => `${e.entity}${e.entityId ? ` ${e.entityId.slice(0, 8)}` : ''}` },
  {
    key: 'why',
    title: 'Reason and details',
    flex: 3,
    render: (e) => (
      <Text variant="caption" numberOfLines={3}>
        {[e.reason ? `“${e.reason}”` : '', detailText(e)].filter(Boolean).join(' ')}
      </Text>
    ),
  },
];

export function AuditScreen() {
  const [person, setPerson] = useState('');
  const [object, setObject] = useState('');
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const [applied, setApplied] = useState<Record<string, string>>({});
  const [exportError, setExportError] = useState<string | null>(null);
  const fromIso = from ? dayBound(from, false) : '';
  const toIso = to ? dayBound(to, true) : '';
  const valid = fromIso !== null && toIso !== null;
  const filter = useMemo(
    () => ({ actor: person.trim(), entity: object.trim(), from: fromIso ?? '', to: toIso ?? '' }),
    [person, object, fromIso, toIso],
  );
  const log = useAuditLog(applied);
  const verify = useAuditVerify();

  return (
    <Screen width="wide" testID="audit-screen">
      <Header
        eyebrow="Records"
        title="Audit log"
        subtitle="Who did what, when and why. Each entry carries the hash of the one before it, so a change made outside Emberlot shows."
      />
      <View style={{ gap: space.sm }} testID="audit-filters">
        <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
          <View style={{ flexGrow: 1, flexBasis: 220 }}>
            <Field label="Person (name or e-mail)" value={person} onChangeText={setPerson} testID="audit-person" />
          </View>
          <View style={{ flexGrow: 1, flexBasis: 160 }}>
            <Field
              label="Object (plan, run, lot, user…)"
              value={object}
              onChangeText={setObject}
              autoCapitalize="none"
              testID="audit-object"
            />
          </View>
          <View style={{ flexGrow: 1, flexBasis: 140 }}>
            <Field
              label="From day"
              placeholder="YYYY-MM-DD"
              value={from}
              onChangeText={setFrom}
              error={fromIso === null ? 'A day as YYYY-MM-DD' : undefined}
              testID="audit-from"
            />
          </View>
          <View style={{ flexGrow: 1, flexBasis: 140 }}>
            <Field
              label="To day"
              placeholder="YYYY-MM-DD"
              value={to}
              onChangeText={setTo}
              error={toIso === null ? 'A day as YYYY-MM-DD' : undefined}
              testID="audit-to"
            />
          </View>
        </View>
        <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
          <Button label="Filter" variant="primary" disabled={!valid} onPress={() => setApplied(filter)} testID="audit-apply" />
          <Button
            label="Export CSV"
            variant="secondary"
            disabled={!valid}
            accessibilityHint="Downloads the entries that match the filter"
            onPress={() =>
              downloadReport(`/api/audit/export.csv${auditQueryString(filter)}`, 'emberlot-audit.csv').catch((e) =>
                setExportError(describeError(e)),
              )
            }
            testID="audit-export"
          />
          <Button
            label="Check the chain"
            variant="quiet"
            busy={verify.isPending}
            busyLabel="Checking…"
            onPress={() => verify.mutate()}
            testID="audit-verify"
          />
        </View>
        {exportError ? <Banner tone="danger">{exportError}</Banner> : null}
        {verify.data ? (
          verify.data.ok ? (
            <Banner tone="ok" testID="audit-chain-ok">
              {`Chain intact: ${verify.data.checked} entries, each linked to the one before.`}
            </Banner>
          ) : (
            <Banner tone="danger" title="The chain is broken" testID="audit-chain-broken">
              {`${verify.data.checked} entries check out; then ${verify.data.firstBreak?.problem}.`}
            </Banner>
          )
        ) : null}
        {verify.isError ? <Banner tone="danger">{describeError(verify.error)}</Banner> : null}
      </View>
      <QueryState
        query={log}
        loadingLabel="Loading the audit log…"
        errorTitle="Could not load the audit log"
        isEmpty={(p) => p.items.length === 0}
        empty={<EmptyState title="No entries" message="Nothing matches this filter." />}
      >
        {(p) => (
          <View style={{ gap: space.xs }}>
            <Text variant="caption" tone="muted" testID="audit-count">
              {p.more
                ? `The newest ${p.items.length} matching entries; narrow the filter or export for more.`
                : `${p.items.length} ${p.items.length === 1 ? 'entry' : 'entries'}.`}
            </Text>
            <DataTable
              caption="Audit log entries"
              columns={columns}
              rows={p.items}
              rowKey={(e) => e.id}
              minTableWidth={900}
              testID="audit-table"
            />
          </View>
        )}
      </QueryState>
    </Screen>
  );
}
