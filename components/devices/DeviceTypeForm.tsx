import { useEffect, useRef, useState } from 'react';
import { Platform, View } from 'react-native';
import { DEVICE_KIND_LABEL, DEVICE_KINDS, impliedPolarity, POLARITIES_BY_KIND } from '@/shared/domain/devices';
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

/** Each field's label as the form shows it (the error summary names fields by these). */
const FIELD_LABEL: Record<Key, string> = {
  partNumber: 'Part number',
  description: 'Description',
  kind: 'Kind',
  polarity: 'Polarity',
  bvcboV: 'BVCBO (V)',
  bvceoV: 'BVCEO (V, optional)',
  bveboV: 'BVEBO (V)',
  breakdownN: 'Breakdown exponent n (–)',
  pMaxW: 'Power rating (W)',
  pRatedAtC: 'Rated at case (°C)',
  tjMaxC: 'Tj max (°C)',
  icMaxA: 'IC max (A)',
  thetaJcCPerW: 'θjc (°C/W)',
  thetaJaCPerW: 'θja (°C/W)',
  betaRef: 'hFE (–)',
  betaRefIcA: 'hFE measured at IC (A)',
  betaRefTC: 'hFE measured at (°C)',
  xtb: 'XTB (–)',
  icboRefA: 'ICBO at 25 °C (nA, optional)',
  icboHotA: 'Hot ICBO (µA)',
  icboHotC: 'at (°C)',
  icboHotVcbV: 'at VCB (V)',
  sbKneeV: 'S/b knee (V)',
  sbSlopeN: 'S/b slope n (–)',
};

/** The form's problems in the order the fields appear, as "Label: message" lines. */
export function errorSummaryLines(errors: Partial<Record<Key, string>>): string[] {
  return (Object.keys(FIELD_LABEL) as Key[]).filter((k) => errors[k]).map((k) => `${FIELD_LABEL[k]}: ${errors[k]}`);
}

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
  const [polarity, setPolarity] = useState<DeviceTypeInput['polarity'] | undefined>(device?.polarity ?? impliedPolarity(kind));
  const polarities = POLARITIES_BY_KIND[kind];
  const chooseKind = (k: DeviceTypeInput['kind']) => {
    setKind(k);
    // Keep a polarity only when it fits the new class; a rectifier has its one polarity.
    setPolarity((p) => (p && POLARITIES_BY_KIND[k].includes(p) ? p : impliedPolarity(k)));
  };
  /** The error summary takes focus after a refused submit (moved to it, read out by screen readers). */
  const summaryRef = useRef<View>(null);
  const [focusSummary, setFocusSummary] = useState(0);
  useEffect(() => {
    if (focusSummary && Platform.OS === 'web') (summaryRef.current as unknown as HTMLElement | null)?.focus?.();
  }, [focusSummary]);
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
      setFocusSummary((n) => n + 1);
      return;
    }
    setErrors({});
    const onError = (e: unknown) => {
      if (isApiError(e) && e.fields) {
        setErrors(e.fieldErrors() as Partial<Record<Key, string>>);
        setFocusSummary((n) => n + 1);
      }
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

  const summary = errorSummaryLines(errors);
  const num = (k: NumKey) => (
    <Field
      label={FIELD_LABEL[k]}
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
      {summary.length ? (
        <View ref={summaryRef} tabIndex={-1} aria-label={`${summary.length} to fix before saving`} testID="device-type-errors">
          <Banner tone="danger" title={`${summary.length} ${summary.length === 1 ? 'field needs' : 'fields need'} fixing before saving`}>
            <View style={{ gap: 2 }}>
              {summary.map((line) => (
                <Text key={line} variant="caption">
                  {`• ${line}`}
                </Text>
              ))}
            </View>
          </Banner>
        </View>
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
          options={DEVICE_KINDS.map((k) => ({ value: k, label: DEVICE_KIND_LABEL[k] }))}
          value={kind}
          onChange={chooseKind}
          help={DEVICE_HELP.kind}
        />
        {polarities.length > 1 ? (
          <SegmentedChoice
            label="Polarity"
            options={polarities.map((p) => ({ value: p, label: p }))}
            value={polarity}
            onChange={setPolarity}
            error={errors.polarity}
            help={DEVICE_HELP.polarity}
            testID="device-polarity"
          />
        ) : (
          <Text variant="caption" tone="muted" testID="device-polarity">
            A rectifier has no polarity to choose.
          </Text>
        )}
      </Columns>

      <Section title="Breakdown" />
      <Columns>
        {num('bvcboV')}
        {num('bvceoV')}
      </Columns>
      <Columns>
        {num('bveboV')}
        {num('breakdownN')}
      </Columns>

      <Section title="Power and thermal" />
      <Columns>
        {num('pMaxW')}
        {num('pRatedAtC')}
      </Columns>
      <Columns>
        {num('tjMaxC')}
        {num('icMaxA')}
      </Columns>
      <Columns>
        {num('thetaJcCPerW')}
        {num('thetaJaCPerW')}
      </Columns>

      <Section title="Gain and leakage" />
      <Columns>
        {num('betaRef')}
        {num('betaRefIcA')}
      </Columns>
      <Columns>
        {num('betaRefTC')}
        {num('xtb')}
      </Columns>
      {num('icboRefA')}
      <Text variant="caption">Hot-leakage point, as the data sheet states it (all three, or none):</Text>
      <Columns>
        {num('icboHotA')}
        {num('icboHotC')}
        {num('icboHotVcbV')}
      </Columns>

      <Section title="Forward safe operating area" />
      <Columns>
        {num('sbKneeV')}
        {num('sbSlopeN')}
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
