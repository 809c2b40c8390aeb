import { useRef, useState } from 'react';
import { ScrollView, TextInput, View } from 'react-native';
import { router, useLocalSearchParams, type Href } from 'expo-router';
import { ROLE_HOME } from '@/shared/roles';
import { checkSignIn } from '@/shared/domain/sign-in';
import { BrandLockup, BrandMark } from '@/components/brand/BrandMark';
import { SESSION_ENDED_MESSAGE, useSignIn } from '@/components/queries/auth';
import { describeError } from '@/components/queries/api';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors, radius, shadow, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Field } from '@/components/ui/Field';
import { Text } from '@/components/ui/Text';
import { SocketGrid } from './SocketGrid';

export const PRODUCT_LINE =
  'Plan accelerated stress runs for power transistors, watch the burn-in floor, and follow every lot from time zero to verdict.';

const POINTS = [
  'Plans checked against breakdown, derating and thermal-runaway margin',
  'A live floor that trips a runaway socket before it takes its neighbours',
  'Read points, drift and lot verdicts in one place',
];

type FieldErrors = Partial<Record<'email' | 'password', string>>;

function SignInForm() {
  const params = useLocalSearchParams<{ ended?: string }>();
  const signIn = useSignIn();
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const passwordRef = useRef<TextInput>(null);

  const submit = () => {
    if (signIn.isPending) return;
    const checked = checkSignIn({ email, password });
    if (!checked.ok) {
      setErrors(checked.errors);
      return;
    }
    setErrors({});
    signIn.mutate(checked.body, {
      onSuccess: (user) => router.replace(ROLE_HOME[user.role] as Href),
    });
  };

  const apiFields =
    signIn.error && 'fieldErrors' in signIn.error ? (signIn.error as { fieldErrors: () => Record<string, string> }).fieldErrors() : {};

  return (
    <View style={{ gap: space.md }}>
      {params.ended && !signIn.isError ? (
        <Banner tone="info" testID="session-ended">
          {SESSION_ENDED_MESSAGE}
        </Banner>
      ) : null}
      {signIn.isError ? (
        <Banner tone="danger" title="Not signed in" testID="sign-in-error">
          {describeError(signIn.error)}
        </Banner>
      ) : null}
      <Field
        label="E-mail"
        value={email}
        onChangeText={setEmail}
        error={errors.email ?? apiFields.email}
        autoComplete="email"
        keyboardType="email-address"
        autoCapitalize="none"
        autoCorrect={false}
        inputMode="email"
        returnKeyType="next"
        onSubmitEditing={() => passwordRef.current?.focus()}
        placeholder="name@harrowgate.example"
        testID="sign-in-email"
      />
      <Field
        ref={passwordRef}
        label="Password"
        value={password}
        onChangeText={setPassword}
        error={errors.password ?? apiFields.password}
        secureTextEntry
        autoComplete="current-password"
        returnKeyType="go"
        onSubmitEditing={submit}
        testID="sign-in-password"
      />
      <Button
        label="Sign in"
        variant="primary"
        onPress={submit}
        busy={signIn.isPending}
        busyLabel="Signing in…"
        fullWidth
        testID="sign-in-submit"
      />
      <Text variant="caption" tone="subtle">
        Accounts are set up by your lab&apos;s administrator. Forgotten your password? Ask them to set a new one.
      </Text>
    </View>
  );
}

/** Emberlot's front door. */
export function SignInScreen() {
  const { gtTablet, gtPhone } = useBreakpoints();

  const card = (
    <View
      style={[
        {
          backgroundColor: colors.surface,
          borderRadius: radius.lg,
          borderWidth: 1,
          borderColor: colors.border,
          padding: gtPhone ? space.xl : space.lg,
          gap: space.lg,
          width: '100%',
          maxWidth: 440,
        },
        shadow,
      ]}
    >
      <View style={{ gap: space.xs }}>
        <Text variant="title" heading={1}>
          Sign in
        </Text>
        <Text variant="body" tone="muted">
          Use the e-mail address your lab registered for you.
        </Text>
      </View>
      <SignInForm />
    </View>
  );

  if (gtTablet) {
    return (
      <View role="main" style={{ flex: 1, flexDirection: 'row', backgroundColor: colors.paper }}>
        <View style={{ flex: 5, backgroundColor: colors.graphite, padding: space.xxl, justifyContent: 'space-between' }}>
          <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
            <BrandMark size={44} onDark />
            <Text variant="title" style={{ color: '#FFFDF8' }}>
              Emberlot
            </Text>
          </View>
          <View style={{ gap: space.lg, maxWidth: 520 }}>
            <Text variant="display" style={{ color: '#FFFDF8', fontSize: 40, lineHeight: 48 }}>
              Stress runs, planned and watched.
            </Text>
            <Text variant="body" style={{ color: '#D9D1C4', fontSize: 18, lineHeight: 28 }}>
              {PRODUCT_LINE}
            </Text>
            <View style={{ gap: space.sm }}>
              {POINTS.map((p) => (
                <View key={p} style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-start' }}>
                  <View style={{ width: 8, height: 8, borderRadius: 2, backgroundColor: colors.ember, marginTop: 8 }} />
                  <Text variant="body" style={{ color: '#E9E2D6', flex: 1 }}>
                    {p}
                  </Text>
                </View>
              ))}
            </View>
            <SocketGrid width={320} />
          </View>
          <Text variant="caption" style={{ color: '#B4AB9D' }}>
            Harrowgate Power Devices · Reliability laboratory
          </Text>
        </View>
        <ScrollView
          style={{ flex: 4 }}
          contentContainerStyle={{ flexGrow: 1, alignItems: 'center', justifyContent: 'center', padding: space.xxl }}
        >
          {card}
        </ScrollView>
      </View>
    );
  }

  return (
    <ScrollView
      role="main"
      style={{ flex: 1, backgroundColor: colors.paper }}
      contentContainerStyle={{
        flexGrow: 1,
        padding: gtPhone ? space.xl : space.md,
        paddingTop: space.xxl,
        gap: space.lg,
        alignItems: 'center',
      }}
      keyboardShouldPersistTaps="handled"
    >
      <View style={{ width: '100%', maxWidth: 440, gap: space.sm }}>
        <BrandLockup size={44} subtitle="Harrowgate Power Devices" />
        <Text variant="body" tone="muted">
          {PRODUCT_LINE}
        </Text>
      </View>
      {card}
    </ScrollView>
  );
}
