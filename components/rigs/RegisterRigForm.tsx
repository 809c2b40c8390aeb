import { useState } from 'react';
import { plainFieldMessage } from '@/shared/domain/api-error';
import { View } from 'react-native';
import { createRigSchema, type RigWithCredentials } from '@/shared/schemas/rigs';
import { Columns } from '@/components/layout/Content';
import { describeError, isApiError } from '@/components/queries/api';
import { useCreateRig } from '@/components/queries/rigs';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { Toggle } from '@/components/ui/Toggle';

type Key = 'code' | 'name' | 'location' | 'socketCount' | 'maxTempC' | 'maxVoltageV' | 'maxHumidityPct';
type Errors = Partial<Record<Key, string>>;

const num = (s: string) => (s.trim() === '' ? NaN : Number(s.replace(',', '.')));

export function RegisterRigForm({ onCreated, onCancel }: { onCreated: (r: RigWithCredentials) => void; onCancel: () => void }) {
  const create = useCreateRig();
  const [v, setV] = useState({ code: '', name: '', location: '', socketCount: '', maxTempC: '', maxVoltageV: '', maxHumidityPct: '' });
  const [humidity, setHumidity] = useState(false);
  const [errors, setErrors] = useState<Errors>({});
  const set = (k: Key) => (text: string) => setV((x) => ({ ...x, [k]: text }));

  const submit = () => {
    const parsed = createRigSchema.safeParse({
      code: v.code,
      name: v.name,
      location: v.location,
      socketCount: num(v.socketCount),
      maxTempC: num(v.maxTempC),
      maxVoltageV: num(v.maxVoltageV),
      humidityCapable: humidity,
      maxHumidityPct: humidity ? num(v.maxHumidityPct) : null,
    });
    if (!parsed.success) {
      const next: Errors = {};
      for (const issue of parsed.error.issues) {
        const k = issue.path[0] as Key;
        if (!next[k]) next[k] = plainFieldMessage(issue.message);
      }
      setErrors(next);
      return;
    }
    setErrors({});
    create.mutate(parsed.data, {
      onSuccess: onCreated,
      onError: (e) => {
        if (isApiError(e) && e.fields) setErrors(e.fieldErrors() as Errors);
      },
    });
  };

  return (
    <Card title="Register a rig" description="Its MQTT credentials are issued at once and shown a single time." testID="register-rig-form">
      {create.isError && !(isApiError(create.error) && create.error.fields) ? (
        <Banner tone="danger" title="Not registered">
          {describeError(create.error)}
        </Banner>
      ) : null}
      <Columns>
        <Field
          label="Rig code"
          value={v.code}
          onChangeText={set('code')}
          error={errors.code}
          help="As printed on the oven, e.g. OV-07"
          autoCapitalize="characters"
          testID="rig-code"
        />
        <Field label="Name" value={v.name} onChangeText={set('name')} error={errors.name} testID="rig-name" />
      </Columns>
      <Columns>
        <Field label="Location" value={v.location} onChangeText={set('location')} error={errors.location} help="Optional, e.g. Bay B" />
        <Field
          label="Sockets"
          value={v.socketCount}
          onChangeText={set('socketCount')}
          error={errors.socketCount}
          keyboardType="number-pad"
          testID="rig-sockets"
        />
      </Columns>
      <Columns>
        <Field
          label="Maximum chamber temperature, °C"
          value={v.maxTempC}
          onChangeText={set('maxTempC')}
          error={errors.maxTempC}
          keyboardType="decimal-pad"
          testID="rig-max-temp"
        />
        <Field
          label="Maximum bias voltage, V"
          value={v.maxVoltageV}
          onChangeText={set('maxVoltageV')}
          error={errors.maxVoltageV}
          keyboardType="decimal-pad"
          testID="rig-max-voltage"
        />
      </Columns>
      <Toggle label="Humidity control" help="A humidity chamber (THB tests)" value={humidity} onChange={setHumidity} />
      {humidity ? (
        <Field
          label="Maximum relative humidity, %"
          value={v.maxHumidityPct}
          onChangeText={set('maxHumidityPct')}
          error={errors.maxHumidityPct}
          keyboardType="decimal-pad"
        />
      ) : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label="Register and issue credentials"
          variant="primary"
          onPress={submit}
          busy={create.isPending}
          busyLabel="Registering…"
          testID="rig-submit"
        />
        <Button label="Cancel" variant="quiet" onPress={onCancel} />
      </View>
    </Card>
  );
}
