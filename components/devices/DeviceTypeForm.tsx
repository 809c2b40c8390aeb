import { useState } from 'react';
import { View } from 'react-native';
import { DEVICE_KINDS, POLARITIES } from '@/shared/domain/devices';
import { deviceTypeCreateSchema, type DeviceType, type DeviceTypeInput } from '@/shared/schemas/devices';
import { Columns } from '@/components/layout/Content';
import { describeError, isApiError } from '@/components/queries/api';
import { useCreateDeviceType, useUpdateDeviceType } from '@/components/queries/device-types';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { numText, parseNum } from './format';
import { DEVICE_HELP } from './help';
import { DEFAULT_SB_KNEE_V, DEFAULT_SB_SLOPE_N } from '@/shared/domain/standards';

type NumKey =
  | 'bvcboV'
  | 'bvceoV'
  | 'bveboV'
  | 'icMaxA'
  | 'pMaxW'
  | 'pRatedAtC'
  | 'tjMaxC'
  | 'thetaJcCPerW'
  | 'thetaJaCPerW'
  | 'betaRef'
  | 'betaRefIcA'
  | 'betaRefTC'
  | 'xtb'
  | 'icboRefA'
  | 'icboHotA'
  | 'icboHotC'
  | 'icboHotVcbV'
  | 'sbKneeV'
  | 'sbSlopeN'
  | 'breakdownN';
type Key = NumKey | 'partNumber' | 'description' | 'kind' | 'polarity';

/** ICBO is typed in nA at 25 °C and µA hot (how data sheets give them); everything else in SI units. */
const SCALE: Partial<Record<NumKey, number>> = { icboRefA: 1e9, icboHotA: 1e6 };
/** Optional numbers: empty means "not given" (null), not "use the default". */
const NULLABLE: NumKey[] = ['bvceoV', 'icboRefA', 'icboHotA', 'icboHotC', 'icboHotVcbV'];

const EMPTY: Record<NumKey, string> = {
  bvcboV: '',
  bvceoV: '',
  bveboV: '',
  icMaxA: '',
  pMaxW: '',
  pRatedAtC: '25',
  tjMaxC: '150',
  thetaJcCPerW: '',
  thetaJaCPerW: '',
  betaRef: '',
  betaRefIcA: '',
  betaRefTC: '25',
  xtb: '1.5',
  icboRefA: '',
  icboHotA: '',
  icboHotC: '',
  icboHotVcbV: '',
  sbKneeV: numText(DEFAULT_SB_KNEE_V),
  sbSlopeN: numText(DEFAULT_SB_SLOPE_N),
  breakdownN: '3',
};

function fromDevice(d: DeviceType): Record<NumKey, string> {
  const out = { ...EMPTY };
  for (const k of Object.keys(EMPTY) as NumKey[]) out[k] = numText(d[k] as number | null, SCALE[k] ?? 1);
  return out;
}

interface Props {
  /** Edit this device type; omit to create a new one. */
  device?: DeviceType;
  onDone: (d: DeviceType) => void;
  onCancel: () => void;
}

/** Create or edit a device type, grouped as a data sheet is: breakdown, power and thermal, gain and leakage. */
export function DeviceTypeForm({ device, onDone, onCancel }: Props) {
  const create = useCreateDeviceType();
  const update = useUpdateDeviceType();
  const busy = create.isPending || update.isPending;
  const [partNumber, setPartNumber] = useState(device?.partNumber ?? '');
  const [description, setDescription] = useState(device?.description ?? '');
  const [kind, setKind] = useState<DeviceTypeInput['kind']>(device?.kind ?? 'bjt');
  const [polarity, setPolarity] = useState<DeviceTypeInput['polarity'] | undefined>(device?.polarity);
  const [nums, setNums] = useState<Record<NumKey, string>>(device ? fromDevice(device) : EMPTY);
  const [errors, setErrors] = useState<Partial<Record<Key, string>>>({});
  const [notice, setNotice] = useState<string | null>(null);
  const error = create.error ?? update.error;

  const setNum = (k: NumKey) => (v: string) => setNums((s) => ({ ...s, [k]: v }));

  const submit = () => {
    setNotice(null);
    const body: Record<string, unknown> = { partNumber, description, kind, polarity };
    for (const k of Object.keys(nums) as NumKey[]) {
      const n = parseNum(nums[k]);
      body[k] = n === undefined ? (NULLABLE.includes(k) ? null : undefined) : n / (SCALE[k] ?? 1);
    }
    const parsed = deviceTypeCreateSchema.safeParse(body);
    if (!parsed.success) {
      const next: Partial<Record<Key, string>> = {};
      for (const issue of parsed.error.issues) {
        const k = issue.path[0] as Key;
        if (next[k]) continue;
        if (k === 'polarity') next[k] = 'Choose the polarity';
        else if (issue.code === 'invalid_type') next[k] = body[k] === undefined ? 'Required' : 'Enter a number';
        else next[k] = issue.message;
      }
      setErrors(next);
      return;
    }
    setErrors({});
    const onError = (e: unknown) => {
      if (isApiError(e) && e.fields) setErrors(e.fieldErrors() as Partial<Record<Key, string>>);
    };
    if (!device) {
      create.mutate(parsed.data, { onSuccess: onDone, onError });
      return;
    }
    const patch: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(parsed.data)) if ((device as Record<string, unknown>)[k] !== v) patch[k] = v;
    if (Object.keys(patch).length === 0) {
      setNotice('Nothing has changed.');
      return;
    }
    update.mutate({ id: device.id, patch }, { onSuccess: onDone, onError });
  };

  const num = (k: NumKey, label: string, unit: string) => (
    <Field
      label={`${label} (${unit})`}
      value={nums[k]}
      onChangeText={setNum(k)}
      error={errors[k]}
      help={DEVICE_HELP[k]}
      keyboardType="decimal-pad"
      inputMode="decimal"
      testID={`device-${k}`}
    />
  );

  return (
    <Card
      title={device ? `Edit ${device.partNumber}` : 'New device type'}
      description="Enter the ratings from the data sheet. The plan check judges every stress plan against them."
      testID="device-type-form"
    >
      {error && !(isApiError(error) && error.fields) ? (
        <Banner tone="danger" title={device ? 'Not saved' : 'Not added'}>
          {describeError(error)}
        </Banner>
      ) : null}
      {notice ? <Banner tone="info">{notice}</Banner> : null}
      <Columns>
        <Field
          label="Part number"
          value={partNumber}
          onChangeText={setPartNumber}
          error={errors.partNumber}
          help={DEVICE_HELP.partNumber}
          autoCapitalize="characters"
          testID="device-partNumber"
        />
        <Field
          label="Description"
          value={description}
          onChangeText={setDescription}
          error={errors.description}
          help={DEVICE_HELP.description}
        />
      </Columns>
      <Columns>
        <SegmentedChoice
          label="Kind"
          options={DEVICE_KINDS.map((k) => ({ value: k, label: k === 'bjt' ? 'Bipolar (BJT)' : k === 'mosfet' ? 'MOSFET' : 'Diode' }))}
          value={kind}
          onChange={setKind}
          help={DEVICE_HELP.kind}
        />
        <SegmentedChoice
          label="Polarity"
          options={POLARITIES.map((p) => ({ value: p, label: p }))}
          value={polarity}
          onChange={setPolarity}
          error={errors.polarity}
          help={DEVICE_HELP.polarity}
        />
      </Columns>

      <Section title="Breakdown" />
      <Columns>
        {num('bvcboV', 'BVCBO', 'V')}
        {num('bvceoV', 'BVCEO', 'V, optional')}
      </Columns>
      <Columns>
        {num('bveboV', 'BVEBO', 'V')}
        {num('breakdownN', 'Breakdown exponent n', '–')}
      </Columns>

      <Section title="Power and thermal" />
      <Columns>
        {num('pMaxW', 'Power rating', 'W')}
        {num('pRatedAtC', 'Rated at case', '°C')}
      </Columns>
      <Columns>
        {num('tjMaxC', 'Tj max', '°C')}
        {num('icMaxA', 'IC max', 'A')}
      </Columns>
      <Columns>
        {num('thetaJcCPerW', 'θjc', '°C/W')}
        {num('thetaJaCPerW', 'θja', '°C/W')}
      </Columns>

      <Section title="Gain and leakage" />
      <Columns>
        {num('betaRef', 'hFE', '–')}
        {num('betaRefIcA', 'hFE measured at IC', 'A')}
      </Columns>
      <Columns>
        {num('betaRefTC', 'hFE measured at', '°C')}
        {num('xtb', 'XTB', '–')}
      </Columns>
      {num('icboRefA', 'ICBO at 25 °C', 'nA, optional')}
      <Text variant="caption">Hot-leakage point, as the data sheet states it (all three, or none):</Text>
      <Columns>
        {num('icboHotA', 'Hot ICBO', 'µA')}
        {num('icboHotC', 'at', '°C')}
        {num('icboHotVcbV', 'at VCB', 'V')}
      </Columns>

      <Section title="Forward safe operating area" />
      <Columns>
        {num('sbKneeV', 'S/b knee', 'V')}
        {num('sbSlopeN', 'S/b slope n', '–')}
      </Columns>

      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label={device ? 'Save changes' : 'Add device type'}
          variant="primary"
          onPress={submit}
          busy={busy}
          busyLabel="Saving…"
          testID="device-type-submit"
        />
        <Button label="Cancel" variant="quiet" onPress={onCancel} disabled={busy} />
      </View>
    </Card>
  );
}

function Section({ title }: { title: string }) {
  return (
    <Text variant="heading" heading={3} style={{ marginTop: space.xs }}>
      {title}
    </Text>
  );
}
