import { router, useLocalSearchParams, type Href } from 'expo-router';
import { useEffect, useMemo, useState, type ReactNode } from 'react';
import { Platform, View } from 'react-native';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError, isApiError } from '@/components/queries/api';
import { useMe } from '@/components/queries/auth';
import { useDeviceTypes } from '@/components/queries/device-types';
import { useCreatePlan, useCreatePlanVersion, useLivePlanCheck, usePlan } from '@/components/queries/plans';
import { useBreakpoints } from '@/components/theme/breakpoints';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { EmptyState } from '@/components/ui/EmptyState';
import { Loading } from '@/components/ui/Loading';
import { Text } from '@/components/ui/Text';
import { can } from '@/shared/domain/permissions';
import type { PlanTemplate } from '@/shared/schemas/plans';
import { PlanCheckPanel } from './PlanCheckPanel';
import {
  emptyForm,
  fieldsFor,
  formFromPlan,
  formFromTemplate,
  incompleteReason,
  serverFieldErrors,
  validateForm,
  type FormErrors,
  type FormState,
} from './plan-form-model';
import { ChamberCard, ConditionsCard, CyclingCard, PlanBasicsCard, StudyCards, Templates, type FormBinding } from './PlanFormSections';
import { planHref } from './links';

/** New plan, or (with ?from=<version id>) a new version of an existing plan. */
export function PlanFormScreen() {
  const params = useLocalSearchParams<{ from?: string; deviceTypeId?: string }>();
  const from = typeof params.from === 'string' && params.from ? params.from : undefined;
  const base = usePlan(from);
  const me = useMe();

  if (me.data && !can(me.data.role, 'plan.edit')) {
    return (
      <Screen>
        <EmptyState
          title="Engineers write plans"
          message="Your role can read plans but not change them."
          action={<Button label="Back to plans" onPress={() => router.replace('/plans' as Href)} />}
        />
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
    return (
      <PlanForm
        key={base.data.id}
        initial={formFromPlan(base.data)}
        versionOf={{ id: base.data.id, version: base.data.version, name: base.data.name }}
      />
    );
  }
  return <PlanForm initial={emptyForm(typeof params.deviceTypeId === 'string' ? params.deviceTypeId : undefined)} />;
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

  const { plan, errors } = useMemo(() => validateForm(s), [s]);
  const live = useLivePlanCheck(plan);
  const [serverErrors, setServerErrors] = useState<FormErrors>({});
  useEffect(() => setServerErrors({}), [s]);
  const f: FormBinding = {
    s,
    set: (k) => (v) => setS((prev) => ({ ...prev, [k]: v })),
    errors: attempted ? { ...errors, ...serverErrors } : serverErrors,
  };
  const device = types.data?.find((d) => d.id === s.deviceTypeId);
  const incomplete = incompleteReason(s, errors);

  const submit = () => {
    setAttempted(true);
    if (!plan) return;
    save.mutate(plan, {
      onSuccess: (p) => router.replace(planHref(p.id)),
      onError: (e) => {
        if (isApiError(e) && e.fields) setServerErrors(serverFieldErrors(e.fields));
      },
    });
  };

  const applyTemplate = (t: PlanTemplate) => {
    if (!t.plan) return;
    setS(formFromTemplate(s, t.plan, !!versionOf));
    setApplied(t.title);
  };

  const checkPanel = (
    <PlanCheckPanel
      check={incomplete ? null : live.data}
      pending={live.pending}
      incomplete={incomplete}
      error={live.isError ? describeError(live.error) : null}
      title="Live plan check"
    />
  );

  const form: ReactNode = (
    <View style={{ gap: space.lg }}>
      <PlanBasicsCard f={f} types={types.data} device={device} versionOf={!!versionOf} />
      {s.deviceTypeId ? <Templates deviceTypeId={s.deviceTypeId} onUse={applyTemplate} applied={applied} /> : null}
      <ConditionsCard f={f} device={device} />
      {!gtTablet ? checkPanel : null}
      {fieldsFor(s.kind).cycling ? <CyclingCard f={f} /> : null}
      <ChamberCard f={f} />
      <StudyCards f={f} />
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
        actions={
          <Button
            label="Cancel"
            variant="quiet"
            onPress={() => (versionOf ? router.replace(planHref(versionOf.id)) : router.replace('/plans' as Href))}
          />
        }
      />
      {gtTablet ? (
        <View style={{ flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' }}>
          <View style={{ flex: 3, minWidth: 0 }}>{form}</View>
          {/* Sticky on the web so the findings stay in view while the bias fields are edited. */}
          <View style={[{ flex: 2, minWidth: 0 }, Platform.OS === 'web' ? ({ position: 'sticky', top: space.md } as object) : null]}>
            {checkPanel}
          </View>
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
