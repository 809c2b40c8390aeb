import { useState } from 'react';
import { Pressable, View } from 'react-native';
import type { MailLogEntry } from '@/shared/schemas/alarms';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { MAIL_PAGE_SIZE, useMailLog } from '@/components/queries/mail';
import { colors, radius, space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';

type StatusFilter = 'all' | 'sent' | 'failed';
const CHOICES = [
  { value: 'all' as const, label: 'All' },
  { value: 'sent' as const, label: 'Sent' },
  { value: 'failed' as const, label: 'Failed' },
];

/** Admin: every e-mail Emberlot sent or failed to send, newest first. */
export function MailLogScreen() {
  const [status, setStatus] = useState<StatusFilter>('all');
  const [page, setPage] = useState(0);
  const [open, setOpen] = useState<MailLogEntry | null>(null);
  const log = useMailLog(status, page);

  const columns: Column<MailLogEntry>[] = [
    { key: 'when', title: 'When', flex: 1.2, render: (m) => formatDateTime(m.createdAt) },
    {
      key: 'status',
      title: 'Result',
      flex: 1,
      render: (m) =>
        m.status === 'sent' ? <StatusPill tone="ok" label="Sent" size="sm" /> : <StatusPill tone="danger" label="Failed" size="sm" />,
    },
    {
      key: 'to',
      title: 'To',
      flex: 1.6,
      card: 'subtitle',
      render: (m) => (
        <Text variant="label" tone="muted" numberOfLines={1}>
          {m.toAddress}
        </Text>
      ),
    },
    {
      key: 'subject',
      title: 'Subject',
      flex: 3,
      card: 'title',
      render: (m) => (
        <Pressable
          accessibilityRole="button"
          accessibilityLabel={`Show the e-mail: ${m.subject}`}
          onPress={() => setOpen(open?.id === m.id ? null : m)}
        >
          <Text variant="body" numberOfLines={2} style={{ textDecorationLine: 'underline' }}>
            {m.subject}
          </Text>
        </Pressable>
      ),
    },
    {
      key: 'error',
      title: 'Error',
      flex: 2,
      render: (m) =>
        m.error ? (
          <Text variant="caption" tone="danger" numberOfLines={3}>
            {m.error}
          </Text>
        ) : (
          '—'
        ),
    },
  ];

  return (
    <Screen width="wide" testID="mail-screen">
      <Header
        eyebrow="Administration"
        title="Mail log"
        subtitle="Every e-mail Emberlot sent about alarms and read points, and every one that failed after its retries."
      />
      <SegmentedChoice
        label="Show"
        options={CHOICES}
        value={status}
        onChange={(v) => {
          setStatus(v);
          setPage(0);
          setOpen(null);
        }}
        testID="mail-status-filter"
      />
      <QueryState
        query={log}
        loadingLabel="Loading the mail log…"
        errorTitle="Could not load the mail log"
        isEmpty={(d) => d.items.length === 0}
        empty={
          <EmptyState
            title="No e-mail yet"
            message="Alarm and read-point e-mails appear here once Emberlot sends them to people who subscribed."
          />
        }
      >
        {(d) => (
          <View style={{ gap: space.sm }}>
            <Text variant="bodyStrong" testID="mail-totals">
              {d.sent} sent, {d.failed} failed in total{status !== 'all' ? ` · ${d.total} shown by this filter` : ''}.
            </Text>
            {open ? (
              <View
                style={{
                  backgroundColor: colors.surface,
                  borderWidth: 1,
                  borderColor: colors.border,
                  borderRadius: radius.md,
                  padding: space.md,
                  gap: space.xs,
                }}
                testID="mail-body"
              >
                <Text variant="heading" heading={3}>
                  {open.subject}
                </Text>
                <Text variant="caption" tone="muted">
                  To {open.toAddress} · {formatDateTime(open.createdAt)} · {open.kind}
                  {open.messageId ? ` · ${open.messageId}` : ''}
                </Text>
                <Text variant="body" selectable style={{ fontFamily: 'monospace' }}>
                  {open.body}
                </Text>
                <View style={{ flexDirection: 'row' }}>
                  <Button size="sm" variant="quiet" label="Close" onPress={() => setOpen(null)} />
                </View>
              </View>
            ) : null}
            <DataTable caption="E-mails sent by Emberlot" columns={columns} rows={d.items} rowKey={(m) => m.id} testID="mail-table" />
            <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center' }}>
              <Button
                size="sm"
                variant="secondary"
                label="Newer"
                disabled={page === 0}
                onPress={() => setPage((p) => Math.max(0, p - 1))}
              />
              <Text variant="caption" tone="muted">
                Page {page + 1} of {Math.max(1, Math.ceil(d.total / MAIL_PAGE_SIZE))}
              </Text>
              <Button
                size="sm"
                variant="secondary"
                label="Older"
                disabled={(page + 1) * MAIL_PAGE_SIZE >= d.total}
                onPress={() => setPage((p) => p + 1)}
              />
            </View>
          </View>
        )}
      </QueryState>
    </Screen>
  );
}
