/**
 * A lot verdict's electronic signatures (21 CFR Part 11 §11.50/§11.200): who signed, when, what the
 * signature means, and whether the data under it has changed since (the hash no longer matches).
 * Signing asks for the signer's password again and the meaning.
 */
import { useState } from 'react';
import { View } from 'react-native';
import { formatDateTime } from '@/components/common/format';
import { describeError, isApiError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useLotSignoff, useSignVerdict } from '@/components/queries/signoff';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { LOT_VERDICT_LABEL } from '@/shared/domain/verdicts';
import { SIGNATURE_MEANINGS, SIGNATURE_MEANING_LABEL, type SignatureMeaning } from '@/shared/domain/signoff';

const MEANING_CHOICES = SIGNATURE_MEANINGS.map((m) => ({ value: m, label: SIGNATURE_MEANING_LABEL[m] }));

function SignForm({ lotId, onDone }: { lotId: string; onDone: () => void }) {
  const sign = useSignVerdict(lotId);
  const [password, setPassword] = useState('');
  const [meaning, setMeaning] = useState<SignatureMeaning | undefined>(undefined);
  const fields = isApiError(sign.error) ? sign.error.fieldErrors() : {};
  return (
    <View style={{ gap: space.sm }} testID="sign-form">
      <SegmentedChoice
        label="What your signature means"
        options={MEANING_CHOICES}
        value={meaning}
        onChange={setMeaning}
        error={fields.meaning}
        help="Choose one: the signature is recorded with its meaning."
        testID="sign-meaning"
      />
      <Field
        label="Your password"
        secureTextEntry
        autoComplete="current-password"
        value={password}
        onChangeText={setPassword}
        help="Signing is an electronic signature: your name, the time, the meaning and a hash of the verdict's data are recorded."
        error={fields.password}
        testID="sign-password"
      />
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label="Sign verdict"
          variant="primary"
          busy={sign.isPending}
          busyLabel="Signing…"
          disabled={!meaning || !password}
          onPress={() =>
            meaning &&
            sign.mutate(
              { password, meaning },
              {
                onSuccess: () => {
                  setPassword('');
                  onDone();
                },
              },
            )
          }
          testID="sign-submit"
        />
        <Button label="Cancel" variant="quiet" onPress={onDone} />
      </View>
      {sign.isError ? (
        <Banner tone="danger" testID="sign-error">
          {describeError(sign.error)}
        </Banner>
      ) : null}
    </View>
  );
}

export function VerdictSignatures({ lotId }: { lotId: string }) {
  const q = useLotSignoff(lotId);
  const can = useCan();
  const [signing, setSigning] = useState(false);
  const s = q.data;
  const stale = s?.signatures.some((x) => x.stale) ?? false;
  const current = s?.signatures.filter((x) => !x.stale) ?? [];
  return (
    <Card
      title="Sign-off"
      description="Releasing a verdict is an electronic signature (21 CFR Part 11 §11.50, §11.200): the signer re-enters the password and states the meaning."
      testID="verdict-signoff"
    >
      <View style={{ gap: space.sm }}>
        {q.isError ? <Banner tone="danger">{describeError(q.error)}</Banner> : null}
        {s && s.signatures.length === 0 ? (
          <Text variant="body" tone="muted">
            Not signed yet.
          </Text>
        ) : null}
        {stale && current.length === 0 ? (
          <Banner tone="danger" title="Needs a new signature" testID="signoff-stale">
            Data under the signed verdict has changed since it was signed (its hash no longer matches). Review the lot and sign again.
          </Banner>
        ) : null}
        {s?.signatures.map((x) => (
          <View key={x.id} style={{ gap: space.xxs }} testID={x.stale ? 'signature-stale' : 'signature-valid'}>
            <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap', alignItems: 'center' }}>
              {x.stale ? (
                <StatusPill tone="danger" label="Data changed since signing" size="sm" />
              ) : (
                <StatusPill tone="ok" label={SIGNATURE_MEANING_LABEL[x.meaning]} size="sm" />
              )}
              <Text variant="label">
                {x.signer.name} ({x.signer.email})
              </Text>
            </View>
            <Text variant="caption">
              {SIGNATURE_MEANING_LABEL[x.meaning]} · verdict {LOT_VERDICT_LABEL[x.verdict].toLowerCase()} · {formatDateTime(x.signedAt)}
            </Text>
            <Text variant="caption" tone="muted" selectable>
              SHA-256 {x.dataHash}
            </Text>
          </View>
        ))}
        {s && !s.signable ? (
          <Text variant="caption" tone="muted">
            A verdict can be signed once the stress is over.
          </Text>
        ) : null}
        {s?.signable && can('verdict.sign') ? (
          signing ? (
            <SignForm lotId={lotId} onDone={() => setSigning(false)} />
          ) : (
            <View style={{ flexDirection: 'row' }}>
              <Button
                label={stale ? 'Sign again' : 'Sign verdict'}
                variant="secondary"
                onPress={() => setSigning(true)}
                testID="sign-open"
              />
            </View>
          )
        ) : null}
      </View>
    </Card>
  );
}
