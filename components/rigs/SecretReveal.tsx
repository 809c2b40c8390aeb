import { formatDateTime } from '@/components/common/format';
import { useState } from 'react';
import { Platform, View } from 'react-native';
import type { RigCredentials } from '@/shared/schemas/rigs';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Text } from '@/components/ui/Text';
import { copyText } from '@/components/ui/copy-text';

const mono = Platform.select({ web: 'ui-monospace, SFMono-Regular, Menlo, Consolas, monospace', ios: 'Menlo', default: 'monospace' });

function Secret({ label, value, testID, copyLabel }: { label: string; value: string; testID: string; copyLabel?: string }) {
  const [copied, setCopied] = useState<'yes' | 'no' | null>(null);
  return (
    <View style={{ gap: space.xxs }}>
      <Text variant="overline" tone="subtle">
        {label}
      </Text>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.xs }}>
        <View
          style={{
            flexGrow: 1,
            flexShrink: 1,
            minWidth: 0,
            backgroundColor: colors.surface,
            borderWidth: 1,
            borderColor: colors.borderStrong,
            borderRadius: radius.sm,
            padding: space.sm,
          }}
        >
          <Text selectable testID={testID} style={{ fontFamily: mono, fontSize: 16, lineHeight: 24, color: colors.ink }}>
            {value}
          </Text>
        </View>
        {copyLabel ? (
          <Button
            size="sm"
            variant="secondary"
            label={copied === 'yes' ? 'Copied' : 'Copy'}
            accessibilityLabel={copyLabel}
            onPress={() => void copyText(value).then((ok) => setCopied(ok ? 'yes' : 'no'))}
            testID={`${testID}-copy`}
          />
        ) : null}
      </View>
      {copied ? (
        <Text variant="caption" tone={copied === 'yes' ? 'muted' : 'danger'} accessibilityLiveRegion="polite" testID={`${testID}-copied`}>
          {copied === 'yes'
            ? `${label} copied to the clipboard.`
            : 'This browser did not allow copying: select the text and copy it by hand.'}
        </Text>
      ) : null}
    </View>
  );
}

/** The one moment the secret is visible. It cannot be shown again: only a new one can be issued. */
export function SecretReveal({ rigCode, credentials, onDone }: { rigCode: string; credentials: RigCredentials; onDone: () => void }) {
  return (
    <Banner tone="warn" title={`MQTT credentials for rig ${rigCode} — shown once`} testID="secret-reveal">
      <View style={{ gap: space.sm }}>
        <Text variant="body">
          Copy the secret into the rig controller now. Emberlot keeps only a hash of it; once you close this notice nobody can read it again
          — you could only issue a new one.
        </Text>
        <Secret label="Broker host" value={credentials.broker.host} testID="secret-broker-host" copyLabel="Copy the broker host" />
        <Secret label="Broker port" value={String(credentials.broker.port)} testID="secret-broker-port" />
        <Secret label="User name" value={credentials.username} testID="secret-username" copyLabel="Copy the user name" />
        <Secret label="Secret" value={credentials.secret} testID="secret-value" copyLabel="Copy the secret" />
        <Text variant="caption" tone="muted">
          Client id on the broker: rig-{rigCode}. Issued {formatDateTime(credentials.issuedAt)}.
        </Text>
        <Button label="I have stored the secret" variant="primary" onPress={onDone} testID="secret-done" />
      </View>
    </Banner>
  );
}
