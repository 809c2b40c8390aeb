import { router, useLocalSearchParams, type Href } from 'expo-router';
import { useEffect, useMemo, useState, type ReactNode } from 'react';
import { Platform, View } from 'react-native';
import { PLAN_KINDS, PLAN_KIND_LABEL, planInputSchema, type PlanInput, type PlanKind, type PlanTemplate } from '@/shared/schemas/plans';
import { numText, parseNum } from '@/components/devices/format';
import { Columns } from '@/components/layout/Content';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError, isApiError } from '@/components/queries/api';
import { useMe } from '@/components/queries/auth';
import { can } from '@/shared/domain/permissions';
import { useDeviceTypes } from '@/components/queries/device-types';
import { useCreatePlan, useCreatePlanVersion, useLivePlanCheck, usePlan, usePlanTemplates } from '@/components/queries/plans';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { Loading } from '@/components/ui/Loading';
import { SafetyCaution } from '@/components/ui/SafetyCaution';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { KIND_HELP, PLAN_HELP } from './help';
import { PlanCheckPanel } from './PlanCheckPanel';
import { KIND_SHORT, planHref } from './PlansScreen';

/** Everything the form holds, as typed (strings), in the units people type them in. */
export interface FormState {
  name: string;
  kind: PlanKind | undefined;
  deviceTypeId: string | undefined;
  chamberC: string;
  humidityPct: string;
  vcbV: string;
  vebV: string;
  vceV: string;
  biasMode: 'ic' | 'ib';
  ibmA: string;
  icmA: string;
  tolerancePct: string;
  durationH: string;
  readPoints: string;
  sampleSize: string;
  acceptNumber: string;
  hfeChangePct: string;
  leakageMultiple: string;
  leakageFloornA: string;
  vcesatShiftmV: string;
  eaEv: string;
  useC: string;
  deratingPct: string;
  onMin: string;
  offMin: string;
  deltaTjC: string;
  cycles: string;
  notes: string;
}
type FormKey = keyof FormState;

export const EMPTY_FORM: FormState = {
  name: '', kind: undefined, deviceTypeId: undefined, chamberC: '', humidityPct: '', vcbV: '', vebV: '', vceV: '', biasMode: 'ic',
  ibmA: '', icmA: '', tolerancePct: '5', durationH: '1000', readPoints: '0, 168, 500, 1000', sampleSize: '77', acceptNumber: '0',
  hfeChangePct: '15', leakageMultiple: '2', leakageFloornA: '200', vcesatShiftmV: '50', eaEv: '0.7', useC: '55', deratingPct: '80',
  onMin: '2', offMin: '2', deltaTjC: '100', cycles: '15000', notes: '',
};

export function formFromPlan(p: PlanInput): FormState {
  return {
    name: p.name,
    kind: p.kind,
    deviceTypeId: p.deviceTypeId,
    chamberC: numText(p.chamberC),
    humidityPct: numText(p.humidityPct),
    vcbV: numText(p.bias.vcbV),
    vebV: numText(p.bias.vebV),
    vceV: numText(p.bias.vceV),
    biasMode: p.bias.ibA !== null && p.bias.icA === null ? 'ib' : 'ic',
    ibmA: numText(p.bias.ibA, 1e3),
    icmA: numText(p.bias.icA, 1e3),
    tolerancePct: numText(p.bias.tolerancePct),
    durationH: numText(p.durationH),
    readPoints: p.readPointsH.join(', '),
    sampleSize: numText(p.sampleSize),
    acceptNumber: numText(p.acceptNumber),
    hfeChangePct: numText(p.criteria.hfeChangePct),
    leakageMultiple: numText(p.criteria.leakageMultiple),
    leakageFloornA: numText(p.criteria.leakageFloorA, 1e9),
    vcesatShiftmV: numText(p.criteria.vcesatShiftV, 1e3),
    eaEv: numText(p.eaEv),
    useC: numText(p.useC),
    deratingPct: numText(p.breakdownDerating, 100),
    onMin: numText(p.cycle?.onMin ?? 2),
    offMin: numText(p.cycle?.offMin ?? 2),
    deltaTjC: numText(p.cycle?.deltaTjC ?? 100),
    cycles: numText(p.cycle?.cycles ?? 15000),
    notes: p.notes,
  };
}

const scaled = (s: string, k: number) => {
  const n = parseNum(s);
  return n === undefined ? undefined : n * k;
};
const orNull = (s: string, k = 1) => scaled(s, k) ?? null;

/** The form as a plan body for the schema: only the fields that belong to the chosen stress. */
export function rawFromForm(s: FormState): Record<string, unknown> {
  const reverse = s.kind === 'htrb' || s.kind === 'thb';
  const powered = s.kind === 'hotl' || s.kind === 'iol';
  const points = s.readPoints.split(/[\s,;]+/).filter(Boolean).map((x) => parseNum(x));
  return {
    name: s.name,
    kind: s.kind,
    deviceTypeId: s.deviceTypeId,
    chamberC: scaled(s.chamberC, 1),
    humidityPct: s.kind === 'thb' ? orNull(s.humidityPct) : null,
    bias: {
      vcbV: reverse ? orNull(s.vcbV) : null,
      vebV: reverse ? orNull(s.vebV) : null,
      vceV: powered ? orNull(s.vceV) : null,
      ibA: powered && s.biasMode === 'ib' ? orNull(s.ibmA, 1e-3) : null,
      icA: powered && s.biasMode === 'ic' ? orNull(s.icmA, 1e-3) : null,
      tolerancePct: scaled(s.tolerancePct, 1),
    },
    durationH: scaled(s.durationH, 1),
    readPointsH: points,
    sampleSize: scaled(s.sampleSize, 1),
    acceptNumber: scaled(s.acceptNumber, 1),
    criteria: {
      hfeChangePct: scaled(s.hfeChangePct, 1),
      leakageMultiple: scaled(s.leakageMultiple, 1),
      leakageFloorA: scaled(s.leakageFloornA, 1e-9),
      vcesatShiftV: scaled(s.vcesatShiftmV, 1e-3),
    },
    eaEv: scaled(s.eaEv, 1),
    useC: scaled(s.useC, 1),
    cycle:
      s.kind === 'iol'
        ? { onMin: scaled(s.onMin, 1), offMin: scaled(s.offMin, 1), deltaTjC: scaled(s.deltaTjC, 1), cycles: scaled(s.cycles, 1) }
        : null,
    breakdownDerating: scaled(s.deratingPct, 0.01),
    notes: s.notes,
  };
}

/** Schema path → the form field that shows it. */
const PATH_TO_FIELD: Record<string, FormKey> = {
  'bias.vcbV': 'vcbV', 'bias.vebV': 'vebV', 'bias.vceV': 'vceV', 'bias.ibA': 'ibmA', 'bias.icA': 'icmA', 'bias.tolerancePct': 'tolerancePct',
  'criteria.hfeChangePct': 'hfeChangePct', 'criteria.leakageMultiple': 'leakageMultiple', 'criteria.leakageFloorA': 'leakageFloornA',
  'criteria.vcesatShiftV': 'vcesatShiftmV', 'cycle.onMin': 'onMin', 'cycle.offMin': 'offMin', 'cycle.deltaTjC': 'deltaTjC', 'cycle.cycles': 'cycles',
  cycle: 'onMin', breakdownDerating: 'deratingPct', readPointsH: 'readPoints',
};
const LABEL: Partial<Record<FormKey, string>> = {
  name: 'Name', kind: 'Stress', deviceTypeId: 'Device type', chamberC: 'Chamber', humidityPct: 'Humidity', vcbV: 'VCB', vebV: 'VEB', vceV: 'VCE',
  ibmA: 'IB', icmA: 'IC', durationH: 'Duration', readPoints: 'Read points', sampleSize: 'Sample size', acceptNumber: 'Accept number',
  onMin: 'Cycle', offMin: 'Off time', deltaTjC: 'ΔTj', cycles: 'Cycles', deratingPct: 'Breakdown derating',
};

export function fieldOf(path: PropertyKey[]): FormKey {
  const full = path.map(String).join('.');
  if (PATH_TO_FIELD[full]) return PATH_TO_FIELD[full];
  if (path[0] === 'readPointsH') return 'readPoints';
  return (PATH_TO_FIELD[String(path[0])] ?? path[0]) as FormKey;
}

function validate(s: FormState): { plan: PlanInput | null; errors: Partial<Record<FormKey, string>> } {
  const r = planInputSchema.safeParse(rawFromForm(s));
  if (r.success) return { plan: r.data, errors: {} };
  const errors: Partial<Record<FormKey, string>> = {};
  for (const i of r.error.issues) {
    const k = fieldOf(i.path);
    if (errors[k]) continue;
    if (k === 'kind') errors[k] = 'Choose the stress';
    else if (k === 'deviceTypeId') errors[k] = 'Choose a device type';
    else if (i.code === 'invalid_type') errors[k] = 'Enter a number';
    else errors[k] = i.message;
  }
  return { plan: null, errors };
}

/** New plan, or (with ?from=<version id>) a new version of an existing plan. */
export function PlanFormScreen() {
  const params = useLocalSearchParams<{ from?: string; deviceTypeId?: string }>();
  const from = typeof params.from === 'string' && params.from ? params.from : undefined;
  const base = usePlan(from);
  const me = useMe();

  if (me.data && !can(me.data.role, 'plan.edit')) {
    return (
      <Screen>
        <EmptyState title="Engineers write plans" message="Your role can read plans but not change them." action={<Button label="Back to plans" onPress={() => router.replace('/plans' as Href)} />} />
      </Screen>
    );
  }
  if (from) {
    if (base.isError) {
      return (
        <Screen>
          <Banner tone="danger" title="Could not open the plan to edit">
            {describeError(base.error)}
          </Banner>
        </Screen>
      );
    }
    if (!base.data) return <Loading label="Loading the plan…" />;
    if (!base.data.current) {
      return (
        <Screen>
          <EmptyState
            title={`Version ${base.data.version} is not the newest`}
            message="Only the newest version of a plan can be edited (runs keep pointing at the version they were booked with)."
            action={<Button label="Open the plan" onPress={() => router.replace(planHref(base.data!.id))} />}
          />
        </Screen>
      );
    }
    return <PlanForm key={base.data.id} initial={formFromPlan(base.data)} versionOf={{ id: base.data.id, version: base.data.version, name: base.data.name }} />;
  }
  return <PlanForm initial={{ ...EMPTY_FORM, deviceTypeId: typeof params.deviceTypeId === 'string' ? params.deviceTypeId : undefined }} />;
}

function PlanForm({ initial, versionOf }: { initial: FormState; versionOf?: { id: string; version: number; name: string } }) {
  const { gtTablet } = useBreakpoints();
  const types = useDeviceTypes();
  const [s, setS] = useState<FormState>(initial);
  const [attempted, setAttempted] = useState(false);
  const [applied, setApplied] = useState<string | null>(null);
  const create = useCreatePlan();
  const version = useCreatePlanVersion(versionOf?.id ?? '');
  const save = versionOf ? version : create;

  const { plan, errors } = useMemo(() => validate(s), [s]);
  const live = useLivePlanCheck(plan);
  const [serverErrors, setServerErrors] = useState<Partial<Record<FormKey, string>>>({});
  useEffect(() => setServerErrors({}), [s]);
  const shownErrors = attempted ? { ...errors, ...serverErrors } : serverErrors;
  const set = <K extends FormKey>(k: K) => (v: FormState[K]) => setS((prev) => ({ ...prev, [k]: v }));
  const device = types.data?.find((d) => d.id === s.deviceTypeId);

  const firstIssue = Object.entries(errors)[0];
  const incomplete = !s.deviceTypeId
    ? 'Choose a device type and a stress to see the check.'
    : !s.kind
      ? 'Choose the stress to see the check.'
      : firstIssue
        ? `Complete the plan to see the check — ${LABEL[firstIssue[0] as FormKey] ?? firstIssue[0]}: ${firstIssue[1]}.`
        : null;

  const submit = () => {
    setAttempted(true);
    if (!plan) return;
    save.mutate(plan, {
      onSuccess: (p) => router.replace(planHref(p.id)),
      onError: (e) => {
        if (isApiError(e) && e.fields) {
          const next: Partial<Record<FormKey, string>> = {};
          for (const [path, msgs] of Object.entries(e.fields)) next[fieldOf(path.split('.'))] ??= msgs[0];
          setServerErrors(next);
        }
      },
    });
  };

  const applyTemplate = (t: PlanTemplate) => {
    if (!t.plan) return;
    setS(formFromPlan(versionOf ? { ...t.plan, name: s.name || t.plan.name } : t.plan));
    setApplied(t.title);
  };

  const maxV = Math.max(parseNum(s.vcbV) ?? 0, parseNum(s.vceV) ?? 0) || 0;
  const num = (k: FormKey, label: string, help?: string) => (
    <Field
      label={label}
      value={s[k] as string}
      onChangeText={set(k) as (v: string) => void}
      error={shownErrors[k]}
      help={help}
      keyboardType="decimal-pad"
      inputMode="decimal"
      testID={`plan-${k}`}
    />
  );

  const checkPanel = (
    <PlanCheckPanel
      check={incomplete ? null : live.data}
      pending={live.pending}
      incomplete={incomplete}
      error={live.isError ? describeError(live.error) : null}
      title="Live plan check"
    />
  );

  const reverse = s.kind === 'htrb' || s.kind === 'thb';
  const powered = s.kind === 'hotl' || s.kind === 'iol';

  const form: ReactNode = (
    <View style={{ gap: space.lg }}>
      <Card title="Plan">
        <Field label="Name" value={s.name} onChangeText={set('name')} error={shownErrors.name} help="Name it by its condition and standard, e.g. “HTRB 145 °C, 80 % VCBO, 1000 h (JESD22-A108)”." testID="plan-name" />
        {types.data ? (
          <SegmentedChoice
            label="Device type"
            options={types.data.map((d) => ({ value: d.id, label: d.partNumber }))}
            value={s.deviceTypeId}
            onChange={(v) => setS((p) => ({ ...p, deviceTypeId: v }))}
            error={shownErrors.deviceTypeId}
            disabled={!!versionOf}
            help={versionOf ? 'A new version keeps the device type; start a new plan for another part.' : device?.description || 'The part whose ratings the plan is checked against.'}
          />
        ) : (
          <Loading label="Loading device types…" />
        )}
        <SegmentedChoice label="Stress" options={PLAN_KINDS.map((k) => ({ value: k, label: KIND_SHORT[k] }))} value={s.kind} onChange={set('kind')} error={shownErrors.kind} />
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

      {s.deviceTypeId ? <Templates deviceTypeId={s.deviceTypeId} onUse={applyTemplate} applied={applied} /> : null}

      <Card title="Conditions and bias">
        <Columns>
          {num('chamberC', 'Chamber (°C)', PLAN_HELP.chamberC)}
          {s.kind === 'thb' ? num('humidityPct', 'Relative humidity (%)', PLAN_HELP.humidityPct) : num('tolerancePct', 'Bias tolerance (± %)', PLAN_HELP.tolerancePct)}
        </Columns>
        {s.kind === 'thb' ? num('tolerancePct', 'Bias tolerance (± %)', PLAN_HELP.tolerancePct) : null}
        {reverse ? (
          <Columns>
            {num('vcbV', 'VCB (V)', PLAN_HELP.vcbV + (device ? ` BVCBO of ${device.partNumber}: ${device.bvcboV} V.` : ''))}
            {num('vebV', 'VEB (V, optional)', PLAN_HELP.vebV + (device ? ` BVEBO: ${device.bveboV} V.` : ''))}
          </Columns>
        ) : null}
        {powered ? (
          <>
            {num('vceV', 'VCE (V)', PLAN_HELP.vceV + (device ? ` BVCEO of ${device.partNumber}: ${device.bvceoV ?? 'not rated (estimated)'}${device.bvceoV ? ' V' : ''}.` : ''))}
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
            {s.biasMode === 'ic' ? num('icmA', 'IC (mA)', device ? `IC max of ${device.partNumber}: ${device.icMaxA * 1000} mA.` : undefined) : num('ibmA', 'IB (mA)', 'The collector current becomes hFE × IB and grows as the part heats.')}
          </>
        ) : null}
        {!s.kind ? (
          <Text variant="caption" tone="muted">
            Choose the stress to set its bias.
          </Text>
        ) : null}
        <SafetyCaution compact context={maxV > 0 ? `This plan puts up to ${maxV} V on every socket${parseNum(s.chamberC) ? ` in a ${s.chamberC} °C chamber` : ''}.` : undefined} testID="plan-safety-caution" />
        {num('deratingPct', 'Breakdown derating (% of rating)', PLAN_HELP.breakdownDerating)}
      </Card>

      {!gtTablet ? checkPanel : null}

      {s.kind === 'iol' ? (
        <Card title="Power cycling" description={PLAN_HELP.cycle}>
          <Columns>
            {num('onMin', 'On (min)')}
            {num('offMin', 'Off (min)')}
          </Columns>
          <Columns>
            {num('deltaTjC', 'Junction swing ΔTj (°C)')}
            {num('cycles', 'Cycles')}
          </Columns>
        </Card>
      ) : null}

      <Card title="Duration and read points">
        <Columns>
          {num('durationH', 'Duration (h)', PLAN_HELP.durationH)}
          <Field label="Read points (h)" value={s.readPoints} onChangeText={set('readPoints')} error={shownErrors.readPoints} help={PLAN_HELP.readPointsH} testID="plan-readPoints" />
        </Columns>
      </Card>

      <Card title="Sample and failure criteria">
        <Columns>
          {num('sampleSize', 'Sample size (devices per lot)', PLAN_HELP.sampleSize)}
          {num('acceptNumber', 'Accept number (failures allowed)', PLAN_HELP.acceptNumber)}
        </Columns>
        <Text variant="caption" tone="muted">
          {PLAN_HELP.criteria}
        </Text>
        <Columns>
          {num('hfeChangePct', 'hFE change (± %)')}
          {num('vcesatShiftmV', 'VCE(sat) shift (mV)')}
        </Columns>
        <Columns>
          {num('leakageMultiple', 'ICBO growth (× initial)')}
          {num('leakageFloornA', 'ICBO floor (nA)')}
        </Columns>
      </Card>

      <Card title="Acceleration">
        <Columns>
          {num('eaEv', 'Activation energy Ea (eV)', PLAN_HELP.eaEv)}
          {num('useC', 'Use temperature (°C)', PLAN_HELP.useC)}
        </Columns>
      </Card>

      <Card title="Notes">
        <Field label="Notes" value={s.notes} onChangeText={set('notes')} multiline numberOfLines={4} error={shownErrors.notes} help="Why this plan, what changed in this version, anything the operators must know." />
      </Card>
    </View>
  );

  return (
    <Screen width="wide" testID="plan-form-screen">
      <Header
        eyebrow={versionOf ? `Version ${versionOf.version + 1} of a plan` : 'New stress plan'}
        title={versionOf ? `Edit “${versionOf.name}”` : 'New plan'}
        subtitle={
          versionOf
            ? `Saving creates version ${versionOf.version + 1}. Version ${versionOf.version} stays as it is for the runs that use it.`
            : 'Start from a template or fill it in; the check updates as you type.'
        }
        actions={<Button label="Cancel" variant="quiet" onPress={() => (versionOf ? router.replace(planHref(versionOf.id)) : router.replace('/plans' as Href))} />}
      />
      {gtTablet ? (
        <View style={{ flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' }}>
          <View style={{ flex: 3, minWidth: 0 }}>{form}</View>
          {/* Sticky on the web so the findings stay in view while the bias fields are edited. */}
          <View style={[{ flex: 2, minWidth: 0 }, Platform.OS === 'web' ? ({ position: 'sticky', top: space.md } as object) : null]}>{checkPanel}</View>
        </View>
      ) : (
        form
      )}
      {save.isError && !(isApiError(save.error) && save.error.fields) ? (
        <Banner tone="danger" title="Not saved">
          {describeError(save.error)}
        </Banner>
      ) : null}
      {attempted && !plan ? <Banner tone="warn">Some fields need attention; each is marked above.</Banner> : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap', alignItems: 'center' }}>
        <Button
          label={versionOf ? `Save as version ${versionOf.version + 1}` : 'Save plan'}
          variant="primary"
          onPress={submit}
          busy={save.isPending}
          busyLabel="Saving…"
          testID="plan-save"
        />
        {live.data?.blocking && !incomplete ? (
          <Text variant="caption" tone="danger">
            The check refuses this plan: it will be saved as a draft that cannot be booked without a written reason.
          </Text>
        ) : null}
      </View>
    </Screen>
  );
}

function Templates({ deviceTypeId, onUse, applied }: { deviceTypeId: string; onUse: (t: PlanTemplate) => void; applied: string | null }) {
  const templates = usePlanTemplates(deviceTypeId);
  const [open, setOpen] = useState<string | null>(null);
  return (
    <Card title="Start from a template" description="Conditions from the published methods, worked out for this device. Review every number; the check judges the result like any plan.">
      {applied ? <Banner tone="ok">Filled in from “{applied}”. Review the numbers before saving.</Banner> : null}
      {templates.isError ? <Banner tone="danger">{describeError(templates.error)}</Banner> : null}
      {!templates.data ? (
        templates.isError ? null : <Loading label="Loading templates…" />
      ) : (
        <View style={{ gap: space.sm }}>
          {templates.data.map((t) => (
            <View key={t.key} style={{ gap: space.xs, padding: space.sm, borderRadius: radius.md, borderWidth: 1, borderColor: colors.border, backgroundColor: colors.surface }} testID={`template-${t.key}`}>
              <Text variant="bodyStrong">{t.title}</Text>
              <Text variant="caption" tone="muted">
                Sources: {t.sources.join('; ')}
              </Text>
              {open === t.key ? (
                <View style={{ gap: 2 }}>
                  {t.rules.map((r) => (
                    <Text key={r.label} variant="caption">
                      <Text variant="caption" style={{ fontWeight: '600' }}>
                        {r.label}:{' '}
                      </Text>
                      {r.value} <Text variant="caption" tone="subtle">{r.source}</Text>
                    </Text>
                  ))}
                </View>
              ) : null}
              <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
                <Button size="sm" label="Use this template" onPress={() => onUse(t)} accessibilityLabel={`Use the template ${t.title}`} testID={`use-template-${t.key}`} />
                <Button size="sm" variant="quiet" label={open === t.key ? 'Hide how the numbers were set' : 'How the numbers were set'} onPress={() => setOpen(open === t.key ? null : t.key)} />
              </View>
            </View>
          ))}
        </View>
      )}
    </Card>
  );
}
