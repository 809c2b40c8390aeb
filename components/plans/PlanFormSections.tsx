/** The plan form's layout: one card per group of fields. The state and its rules live in plan-form-model.ts. */
import { useState } from 'react';
import { View } from 'react-native';
import { parseNum } from '@/components/devices/format';
import { Columns } from '@/components/layout/Content';
import { describeError } from '@/components/queries/api';
import { usePlanTemplates } from '@/components/queries/plans';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { Loading } from '@/components/ui/Loading';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { METHOD_CHAMBER_BAND_K, bandText } from '@/shared/domain/standards';
import { AC_CONDITIONS, AC_CONDITION_CODES, CHAMBER_CAUTION } from '@/shared/domain/chamber-methods';
import type { DeviceType } from '@/shared/schemas/devices';
import { PLAN_KINDS, PLAN_KIND_LABEL } from '@/shared/domain/stress';
import type { PlanTemplate } from '@/shared/schemas/plans';
import { PLAN_HELP } from './help';
import { KIND_HELP } from './kind-help';
import { SourceNote } from './SourceNote';
import { fieldsFor, maxBiasV, type FormErrors, type FormKey, type FormState } from './plan-form-model';
import { KIND_SHORT } from './links';

/** The form's state with its setter and the errors to show, handed to every card. */
export interface FormBinding {
  s: FormState;
  set: <K extends FormKey>(k: K) => (v: FormState[K]) => void;
  errors: FormErrors;
}

/** A numeric field bound to one key of the form. */
function NumField({ f, k, label, help }: { f: FormBinding; k: FormKey; label: string; help?: string }) {
  return (
    <Field
      label={label}
      value={f.s[k] as string}
      onChangeText={f.set(k) as (v: string) => void}
      error={f.errors[k]}
      help={help}
      keyboardType="decimal-pad"
      inputMode="decimal"
      testID={`plan-${k}`}
    />
  );
}

export function PlanBasicsCard({
  f,
  types,
  device,
  versionOf,
}: {
  f: FormBinding;
  types: DeviceType[] | undefined;
  device: DeviceType | undefined;
  versionOf: boolean;
}) {
  const { s, set, errors } = f;
  return (
    <Card title="Plan">
      <Field
        label="Name"
        value={s.name}
        onChangeText={set('name')}
        error={errors.name}
        help="Name it by its condition and standard, e.g. “HTRB 145 °C, 80 % VCBO, 1000 h (JESD22-A108)”."
        testID="plan-name"
      />
      {types ? (
        <SegmentedChoice
          label="Device type"
          options={types.map((d) => ({ value: d.id, label: d.partNumber }))}
          value={s.deviceTypeId}
          onChange={set('deviceTypeId')}
          error={errors.deviceTypeId}
          disabled={versionOf}
          help={
            versionOf
              ? 'A new version keeps the device type; start a new plan for another part.'
              : device?.description || 'The part whose ratings the plan is checked against.'
          }
        />
      ) : (
        <Loading label="Loading device types…" />
      )}
      <SegmentedChoice
        label="Stress"
        options={PLAN_KINDS.map((k) => ({ value: k, label: KIND_SHORT[k] }))}
        value={s.kind}
        onChange={set('kind')}
        error={errors.kind}
      />
      {s.kind ? (
        <Text variant="caption" tone="muted">
          <Text variant="caption" style={{ fontWeight: '600' }}>
            {PLAN_KIND_LABEL[s.kind]}.{' '}
          </Text>
          {KIND_HELP[s.kind]}
        </Text>
      ) : (
        <View style={{ gap: space.xxs }}>
          {PLAN_KINDS.map((k) => (
            <Text key={k} variant="caption" tone="muted">
              <Text variant="caption" style={{ fontWeight: '600' }}>
                {KIND_SHORT[k]}:{' '}
              </Text>
              {KIND_HELP[k]}
            </Text>
          ))}
        </View>
      )}
    </Card>
  );
}

function PoweredBias({ f, device }: { f: FormBinding; device: DeviceType | undefined }) {
  const { s, set } = f;
  return (
    <>
      <NumField
        f={f}
        k="vceV"
        label="VCE (V)"
        help={
          PLAN_HELP.vceV +
          (device ? ` BVCEO of ${device.partNumber}: ${device.bvceoV ?? 'not rated (estimated)'}${device.bvceoV ? ' V' : ''}.` : '')
        }
      />
      <SegmentedChoice
        label="Current"
        options={[
          { value: 'ic', label: 'Regulate IC' },
          { value: 'ib', label: 'Force IB' },
        ]}
        value={s.biasMode}
        onChange={set('biasMode')}
        help={PLAN_HELP.biasMode}
      />
      {s.biasMode === 'ic' ? (
        <NumField
          f={f}
          k="icmA"
          label="IC (mA)"
          help={device ? `IC max of ${device.partNumber}: ${device.icMaxA * 1000} mA.` : undefined}
        />
      ) : (
        <NumField f={f} k="ibmA" label="IB (mA)" help="The collector current becomes hFE × IB and grows as the part heats." />
      )}
    </>
  );
}

export function ConditionsCard({ f, device }: { f: FormBinding; device: DeviceType | undefined }) {
  const { s } = f;
  const shown = fieldsFor(s.kind);
  const maxV = maxBiasV(s);
  const tolerance = <NumField f={f} k="tolerancePct" label="Bias tolerance (± %)" help={PLAN_HELP.tolerancePct} />;
  return (
    <Card title="Conditions and bias">
      <Columns>
        {shown.autoclave ? null : (
          <NumField
            f={f}
            k="chamberC"
            label={shown.thermalCycling ? 'Hot extreme (°C)' : 'Stress temperature (°C, minimum)'}
            help={PLAN_HELP.chamberC}
          />
        )}
        {shown.humidity ? <NumField f={f} k="humidityPct" label="Relative humidity (%)" help={PLAN_HELP.humidityPct} /> : tolerance}
      </Columns>
      <Columns>
        <NumField
          f={f}
          k="bandBelowK"
          label="Band below (K)"
          help={PLAN_HELP.chamberBand + (s.kind ? ` This stress: ${bandText(METHOD_CHAMBER_BAND_K[s.kind])}.` : '')}
        />
        <NumField f={f} k="bandAboveK" label="Band above (K)" />
      </Columns>
      {shown.humidity ? tolerance : null}
      {shown.reverse ? (
        <Columns>
          <NumField
            f={f}
            k="vcbV"
            label="VCB (V)"
            help={PLAN_HELP.vcbV + (device ? ` BVCBO of ${device.partNumber}: ${device.bvcboV} V.` : '')}
          />
          <NumField f={f} k="vebV" label="VEB (V, optional)" help={PLAN_HELP.vebV + (device ? ` BVEBO: ${device.bveboV} V.` : '')} />
        </Columns>
      ) : null}
      {shown.powered ? <PoweredBias f={f} device={device} /> : null}
      {!s.kind ? (
        <Text variant="caption" tone="muted">
          Choose the stress to set its bias.
        </Text>
      ) : null}
      <SafetyCaution
        compact
        context={
          maxV > 0
            ? `This plan puts up to ${maxV} V on every socket${parseNum(s.chamberC) ? ` in a ${s.chamberC} °C chamber` : ''}.`
            : undefined
        }
        testID="plan-safety-caution"
      />
      <NumField f={f} k="deratingPct" label="Breakdown derating (% of rating)" help={PLAN_HELP.breakdownDerating} />
    </Card>
  );
}

/** The unbiased chamber kinds: the cycling profile (tc) or the autoclave condition (ac), with the chamber's caution. */
export function ChamberCard({ f }: { f: FormBinding }) {
  const { s, set, errors } = f;
  const shown = fieldsFor(s.kind);
  if (!shown.unbiased || !s.kind) return null;
  const kind = s.kind as 'tc' | 'htsl' | 'ac';
  return (
    <Card
      title={shown.thermalCycling ? 'Temperature-cycling profile' : shown.autoclave ? 'Autoclave condition' : 'Storage chamber'}
      description="No bias: the devices are loaded into a chamber by serial list, and its load temperature is the stress."
    >
      {shown.thermalCycling ? (
        <>
          <Columns>
            <NumField f={f} k="tcLowC" label="Cold extreme (°C)" help="The load must reach it (band +0/−10 K, JESD22-A104 from memory)." />
            <NumField f={f} k="tcCycles" label="Cycles" />
          </Columns>
          <Columns>
            <NumField f={f} k="tcDwellMin" label="Dwell at each extreme (min)" />
            <NumField f={f} k="tcRampKPerMin" label="Air ramp (K/min)" />
          </Columns>
          <Text variant="caption" tone="muted">
            The stress temperature above is the hot extreme. Read points below are in cycles.
          </Text>
        </>
      ) : null}
      {shown.autoclave ? (
        <SegmentedChoice
          label="Condition"
          options={AC_CONDITION_CODES.map((c) => ({ value: c, label: AC_CONDITIONS[c].label }))}
          value={s.acCondition}
          onChange={set('acCondition')}
          error={errors.acCondition}
        />
      ) : null}
      <SafetyCaution compact context={CHAMBER_CAUTION[kind]} testID="plan-chamber-caution" />
    </Card>
  );
}

export function CyclingCard({ f }: { f: FormBinding }) {
  return (
    <Card title="Power cycling" description={PLAN_HELP.cycle}>
      <Columns>
        <NumField f={f} k="onMin" label="On (min)" />
        <NumField f={f} k="offMin" label="Off (min)" />
      </Columns>
      <Columns>
        <NumField f={f} k="deltaTjC" label="Junction swing ΔTj (°C)" />
        <NumField f={f} k="cycles" label="Cycles" />
      </Columns>
    </Card>
  );
}

/** Duration and read points, sample and criteria, acceleration, notes. */
export function StudyCards({ f }: { f: FormBinding }) {
  const { s, set, errors } = f;
  const inCycles = fieldsFor(s.kind).thermalCycling;
  return (
    <>
      <Card title="Duration and read points">
        <Columns>
          {inCycles ? null : <NumField f={f} k="durationH" label="Duration (h)" help={PLAN_HELP.durationH} />}
          <Field
            label={inCycles ? 'Read points (cycles)' : 'Read points (h)'}
            value={s.readPoints}
            onChangeText={set('readPoints')}
            error={errors.readPoints}
            help={PLAN_HELP.readPointsH}
            testID="plan-readPoints"
          />
        </Columns>
      </Card>

      <Card title="Sample and failure criteria">
        <Columns>
          <NumField f={f} k="sampleSize" label="Sample size (devices per lot)" help={PLAN_HELP.sampleSize} />
          <NumField f={f} k="acceptNumber" label="Accept number (failures allowed)" help={PLAN_HELP.acceptNumber} />
        </Columns>
        <Text variant="caption" tone="muted">
          {PLAN_HELP.criteria}
        </Text>
        <Columns>
          <NumField f={f} k="hfeChangePct" label="hFE change (± %)" />
          <NumField f={f} k="vcesatShiftmV" label="VCE(sat) shift (mV)" />
        </Columns>
        <Columns>
          <NumField f={f} k="leakageMultiple" label="ICBO growth (× initial)" />
          <NumField f={f} k="leakageFloornA" label="ICBO floor (nA)" />
        </Columns>
      </Card>

      <Card title="Acceleration">
        <Columns>
          <NumField f={f} k="eaEv" label="Activation energy Ea (eV)" help={PLAN_HELP.eaEv} />
          <NumField f={f} k="useC" label="Use temperature (°C)" help={PLAN_HELP.useC} />
        </Columns>
      </Card>

      <Card title="Notes">
        <Field
          label="Notes"
          value={s.notes}
          onChangeText={set('notes')}
          multiline
          numberOfLines={4}
          error={errors.notes}
          help="Why this plan, what changed in this version, anything the operators must know."
        />
      </Card>
    </>
  );
}

export function Templates({
  deviceTypeId,
  onUse,
  applied,
}: {
  deviceTypeId: string;
  onUse: (t: PlanTemplate) => void;
  applied: string | null;
}) {
  const templates = usePlanTemplates(deviceTypeId);
  const [open, setOpen] = useState<string | null>(null);
  return (
    <Card
      title="Start from a template"
      description="Conditions from the published methods, worked out for this device. Review every number; the check judges the result like any plan."
    >
      {applied ? <Banner tone="ok">Filled in from “{applied}”. Review the numbers before saving.</Banner> : null}
      {templates.isError ? <Banner tone="danger">{describeError(templates.error)}</Banner> : null}
      {!templates.data ? (
        templates.isError ? null : (
          <Loading label="Loading templates…" />
        )
      ) : (
        <View style={{ gap: space.sm }}>
          {templates.data.map((t) => (
            <TemplateRow key={t.key} t={t} open={open === t.key} onToggle={() => setOpen(open === t.key ? null : t.key)} onUse={onUse} />
          ))}
        </View>
      )}
    </Card>
  );
}

function TemplateRow({
  t,
  open,
  onToggle,
  onUse,
}: {
  t: PlanTemplate;
  open: boolean;
  onToggle: () => void;
  onUse: (t: PlanTemplate) => void;
}) {
  return (
    <View
      style={{
        gap: space.xs,
        padding: space.sm,
        borderRadius: radius.md,
        borderWidth: 1,
        borderColor: colors.border,
        backgroundColor: colors.surface,
      }}
      testID={`template-${t.key}`}
    >
      <Text variant="bodyStrong">{t.title}</Text>
      <Text variant="caption" tone="muted">
        Sources:
      </Text>
      <SourceNote source={t.sources.join(' ')} testID={`template-sources-${t.key}`} />
      {open ? (
        <View style={{ gap: 2 }}>
          {t.rules.map((r) => (
            <View key={r.label} style={{ gap: 2 }}>
              <Text variant="caption">
                <Text variant="caption" style={{ fontWeight: '600' }}>
                  {r.label}:{' '}
                </Text>
                {r.value}
              </Text>
              <SourceNote source={r.source} />
            </View>
          ))}
        </View>
      ) : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          size="sm"
          label="Use this template"
          onPress={() => onUse(t)}
          accessibilityLabel={`Use the template ${t.title}`}
          testID={`use-template-${t.key}`}
        />
        <Button size="sm" variant="quiet" label={open ? 'Hide how the numbers were set' : 'How the numbers were set'} onPress={onToggle} />
      </View>
    </View>
  );
}
