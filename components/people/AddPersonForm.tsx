import { useState } from 'react';
import { View } from 'react-native';
import type { Role } from '@/shared/roles';
import { createUserSchema } from '@/shared/schemas/users';
import type { User } from '@/shared/schemas/users';
import { Columns } from '@/components/layout/Content';
import { describeError, isApiError } from '@/components/queries/api';
import { useCreateUser } from '@/components/queries/users';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { ROLE_CHOICES } from './roles';

type Key = 'name' | 'email' | 'role' | 'password';
type Errors = Partial<Record<Key, string>>;

interface Props {
  onCreated: (user: User) => void;
  onCancel: () => void;
}

export function AddPersonForm({ onCreated, onCancel }: Props) {
  const create = useCreateUser();
  const [name, setName] = useState('');
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<Role | undefined>(undefined);
  const [password, setPassword] = useState('');
  const [errors, setErrors] = useState<Errors>({});

  const submit = () => {
    const parsed = createUserSchema.safeParse({ name, email, role, password });
    if (!parsed.success) {
      const next: Errors = {};
      for (const issue of parsed.error.issues) {
        const k = issue.path[0] as Key;
        if (!next[k]) next[k] = k === 'role' ? 'Choose a role' : issue.message;
      }
      setErrors(next);
      return;
    }
    setErrors({});
    create.mutate(parsed.data, {
      onSuccess: (user) => onCreated(user),
      onError: (e) => {
        if (isApiError(e) && e.fields) setErrors(e.fieldErrors() as Errors);
      },
    });
  };

  const serverFieldErrors = isApiError(create.error) && create.error.fields;

  return (
    <Card
      title="Add a person"
      description="They can sign in straight away with the e-mail and password you set here."
      testID="add-person-form"
    >
      {create.isError && !serverFieldErrors ? (
        <Banner tone="danger" title="Not added">
          {describeError(create.error)}
        </Banner>
      ) : null}
      <Columns>
        <Field label="Full name" value={name} onChangeText={setName} error={errors.name} autoComplete="name" testID="add-person-name" />
        <Field
          label="E-mail"
          value={email}
          onChangeText={setEmail}
          error={errors.email}
          autoCapitalize="none"
          autoCorrect={false}
          keyboardType="email-address"
          inputMode="email"
          testID="add-person-email"
        />
      </Columns>
      <SegmentedChoice
        label="Role"
        options={ROLE_CHOICES}
        value={role}
        onChange={setRole}
        error={errors.role}
        help="Decides which pages they see. You can change it later."
      />
      <Field
        label="First password"
        value={password}
        onChangeText={setPassword}
        error={errors.password}
        secureTextEntry
        autoComplete="new-password"
        help="At least 10 characters. Hand it over in person, not by e-mail."
        testID="add-person-password"
      />
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label="Add person"
          variant="primary"
          onPress={submit}
          busy={create.isPending}
          busyLabel="Adding…"
          testID="add-person-submit"
        />
        <Button label="Cancel" variant="quiet" onPress={onCancel} disabled={create.isPending} />
      </View>
    </Card>
  );
}
