import { useState } from 'react';
import { Platform, View, type TextStyle } from 'react-native';
import { can } from '@/shared/domain/permissions';
import { ROLE_LABEL, type Role } from '@/shared/roles';
import type { User } from '@/shared/schemas/users';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan, useMe } from '@/components/queries/auth';
import { useUpdateUser, useUsers } from '@/components/queries/users';
import { space } from '@/components/theme/tokens';
import { Badge, StatusPill } from '@/components/ui/StatusPill';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { ConfirmDialog } from '@/components/ui/ConfirmDialog';
import { DataTable, type Column } from '@/components/ui/DataTable';
import { EmptyState } from '@/components/ui/EmptyState';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { AddPersonForm } from '@/components/forms/LazyForms';
import { ROLE_CHOICES } from './roles';
import { matchesPerson } from './person-search';
import { Field } from '@/components/ui/Field';
import { countOf } from '@/shared/domain/format';

/** Lets a long e-mail address break between any two characters (react-native-web passes it to CSS). */
const WRAP_ANYWHERE: TextStyle = { flexShrink: 1, ...(Platform.OS === 'web' ? { wordBreak: 'break-all' } : {}) };

type Pending = { kind: 'role'; user: User; role: Role } | { kind: 'active'; user: User } | null;

/** Admin home: who can sign in, with which role. */
export function PeopleScreen() {
  const me = useMe();
  const may = useCan();
  // The shell covers this page for other roles, but it stays mounted underneath: ask only when allowed.
  const users = useUsers(may('user.manage'));
  const update = useUpdateUser();
  const [adding, setAdding] = useState(false);
  const [pending, setPending] = useState<Pending>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [query, setQuery] = useState('');

  const close = () => {
    setPending(null);
    update.reset();
  };

  const confirm = () => {
    if (!pending) return;
    const { user } = pending;
    const patch = pending.kind === 'role' ? { role: pending.role } : { active: !user.active };
    update.mutate(
      { id: user.id, patch },
      {
        onSuccess: (u) => {
          setNotice(
            pending.kind === 'role'
              ? `${u.name} is now ${ROLE_LABEL[u.role].toLowerCase()}.`
              : u.active
                ? `${u.name} can sign in again.`
                : `${u.name} is deactivated and cannot sign in.`,
          );
          setPending(null);
        },
      },
    );
  };

  const isSelf = (u: User) => me.data?.id === u.id;

  /** The per-user safety-approval grant: saved at once, audited on the server. */
  const toggleApprover = (u: User) => {
    setNotice(null);
    update.mutate(
      { id: u.id, patch: { safetyApprover: !u.safetyApprover } },
      {
        onSuccess: (x) =>
          setNotice(
            x.safetyApprover
              ? `${x.name} may now approve other people's safety overrides.`
              : `${x.name} no longer approves safety overrides.`,
          ),
      },
    );
  };

  const columns: Column<User>[] = [
    { key: 'name', title: 'Name', flex: 1.3, card: 'title', render: (u) => u.name },
    {
      key: 'email',
      title: 'E-mail',
      flex: 2.4,
      card: 'subtitle',
      render: (u) => (
        // The whole address, wrapped at any character when the column is narrow (never cut off).
        <Text variant="label" tone="muted" style={WRAP_ANYWHERE}>
          {u.email}
        </Text>
      ),
    },
    { key: 'role', title: 'Role', flex: 1.4, render: (u) => <Badge label={ROLE_LABEL[u.role]} /> },
    {
      key: 'active',
      title: 'Status',
      flex: 1,
      render: (u) =>
        u.active ? <StatusPill tone="ok" label="Active" size="sm" /> : <StatusPill tone="idle" label="Deactivated" size="sm" />,
    },
    {
      key: 'approver',
      title: 'Safety approval',
      flex: 1.2,
      render: (u) =>
        u.safetyApprover ? (
          <StatusPill tone="attention" label="Approves overrides" size="sm" testID={`approver-${u.email}`} />
        ) : (
          <Text variant="caption" tone="muted">
            —
          </Text>
        ),
    },
    { key: 'last', title: 'Last sign-in', flex: 1.3, render: (u) => formatDateTime(u.lastSignInAt) },
    {
      key: 'actions',
      title: 'Actions',
      flex: 1.9,
      card: 'actions',
      render: (u) =>
        isSelf(u) ? (
          <Text variant="caption" tone="muted">
            This is you
          </Text>
        ) : (
          <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
            {can(u.role, 'override.decide') || u.safetyApprover ? (
              <Button
                size="sm"
                variant="quiet"
                label={u.safetyApprover ? 'Withdraw approval' : 'Grant approval'}
                accessibilityLabel={`${u.safetyApprover ? 'Withdraw the safety approval of' : 'Grant the safety approval to'} ${u.name}`}
                busy={update.isPending && update.variables?.id === u.id && update.variables.patch.safetyApprover !== undefined}
                onPress={() => toggleApprover(u)}
              />
            ) : null}
            <Button
              size="sm"
              label="Change role"
              accessibilityLabel={`Change role of ${u.name}`}
              onPress={() => setPending({ kind: 'role', user: u, role: u.role })}
            />
            <Button
              size="sm"
              variant="quiet"
              label={u.active ? 'Deactivate' : 'Reactivate'}
              accessibilityLabel={`${u.active ? 'Deactivate' : 'Reactivate'} ${u.name}`}
              onPress={() => setPending({ kind: 'active', user: u })}
            />
          </View>
        ),
    },
  ];

  return (
    <Screen width="wide" testID="people-screen">
      <Header
        eyebrow="Administration"
        title="People"
        subtitle="Everyone who can sign in to Emberlot, and what their role lets them do."
        actions={
          adding ? null : (
            <Button
              label="Add person"
              variant="primary"
              onPress={() => {
                setNotice(null);
                setAdding(true);
              }}
            />
          )
        }
      />
      {update.isError && !pending ? <Banner tone="danger">{describeError(update.error)}</Banner> : null}
      {notice ? (
        <Banner tone="ok" action={<Button size="sm" variant="quiet" label="Dismiss" onPress={() => setNotice(null)} />}>
          {notice}
        </Banner>
      ) : null}
      {adding ? (
        <AddPersonForm
          onCancel={() => setAdding(false)}
          onCreated={(u) => {
            setAdding(false);
            setNotice(`${u.name} was added as ${ROLE_LABEL[u.role].toLowerCase()} and can sign in now.`);
          }}
        />
      ) : null}
      <QueryState
        query={users}
        loadingLabel="Loading people…"
        errorTitle="Could not load people"
        isEmpty={(list) => list.length === 0}
        empty={<EmptyState title="Nobody here yet" message="Add the first engineers, operators and managers so they can sign in." />}
      >
        {(list) => {
          const shown = list.filter((u) => matchesPerson(u, query));
          return (
            <View style={{ gap: space.sm }}>
              <Field
                label="Search people"
                value={query}
                onChangeText={setQuery}
                placeholder="Name, e-mail or role"
                help={query.trim() ? `${countOf(shown.length, 'person', 'people')} of ${list.length} shown` : undefined}
                autoCapitalize="none"
                autoCorrect={false}
                testID="people-search"
              />
              {shown.length ? (
                <DataTable
                  caption="People who can sign in"
                  columns={columns}
                  rows={[...shown].sort((a, b) => Number(b.active) - Number(a.active) || a.name.localeCompare(b.name))}
                  rowKey={(u) => u.id}
                  minTableWidth={1000}
                  testID="people-table"
                />
              ) : (
                <EmptyState title="Nobody matches" message={`No name, e-mail address or role contains “${query.trim()}”.`} />
              )}
            </View>
          );
        }}
      </QueryState>

      <ConfirmDialog
        visible={pending?.kind === 'role'}
        title={pending ? `Change the role of ${pending.user.name}` : ''}
        message="The new role takes effect on their next page load."
        confirmLabel="Save role"
        onConfirm={confirm}
        onCancel={close}
        busy={update.isPending}
        confirmDisabled={pending?.kind === 'role' && pending.role === pending.user.role}
        testID="confirm-role"
      >
        {pending?.kind === 'role' ? (
          <SegmentedChoice label="Role" options={ROLE_CHOICES} value={pending.role} onChange={(role) => setPending({ ...pending, role })} />
        ) : null}
        {update.isError ? <Banner tone="danger">{describeError(update.error)}</Banner> : null}
      </ConfirmDialog>

      <ConfirmDialog
        visible={pending?.kind === 'active'}
        title={pending ? `${pending.user.active ? 'Deactivate' : 'Reactivate'} ${pending.user.name}?` : ''}
        message={
          pending?.user.active
            ? 'They will not be able to sign in until an administrator reactivates the account. Their plans and records stay.'
            : 'They will be able to sign in again with their existing password.'
        }
        confirmLabel={pending?.user.active ? 'Deactivate' : 'Reactivate'}
        confirmVariant={pending?.user.active ? 'danger' : 'primary'}
        testID="confirm-active"
        onConfirm={confirm}
        onCancel={close}
        busy={update.isPending}
      >
        {update.isError ? <Banner tone="danger">{describeError(update.error)}</Banner> : null}
      </ConfirmDialog>
    </Screen>
  );
}
