/**
 * The forms, loaded on demand (see form-kit.ts): a screen renders these wrappers, which show a short
 * "Loading the form…" while the forms' chunk arrives (once per visit; React.lazy caches it).
 */
import { lazy, Suspense, type ComponentProps, type ComponentType } from 'react';
import { Loading } from '@/components/ui/Loading';
import type * as Kit from './form-kit';

// One chunk for every form; React.lazy caches the promise per component.
const kit = () => import('./form-kit');

const fallback = <Loading label="Loading the form…" variant="spinner" testID="form-loading" />;

function lazyForm<P extends object>(name: string, load: () => Promise<ComponentType<P>>) {
  const Lazy = lazy(() => load().then((component) => ({ default: component })));
  function LazyForm(props: P) {
    return (
      <Suspense fallback={fallback}>
        <Lazy {...props} />
      </Suspense>
    );
  }
  LazyForm.displayName = `Lazy(${name})`;
  return LazyForm;
}

export const DeviceTypeForm = lazyForm<ComponentProps<typeof Kit.DeviceTypeForm>>('DeviceTypeForm', () =>
  kit().then((m) => m.DeviceTypeForm),
);
export const NewLotForm = lazyForm<ComponentProps<typeof Kit.NewLotForm>>('NewLotForm', () => kit().then((m) => m.NewLotForm));
export const LotTraceabilityForm = lazyForm<ComponentProps<typeof Kit.LotTraceabilityForm>>('LotTraceabilityForm', () =>
  kit().then((m) => m.LotTraceabilityForm),
);
export const AddPersonForm = lazyForm<ComponentProps<typeof Kit.AddPersonForm>>('AddPersonForm', () => kit().then((m) => m.AddPersonForm));
export const PlanFormScreen = lazyForm<Record<string, never>>('PlanFormScreen', () => kit().then((m) => m.PlanFormScreen));
export const ManualEntryForm = lazyForm<ComponentProps<typeof Kit.ManualEntryForm>>('ManualEntryForm', () =>
  kit().then((m) => m.ManualEntryForm),
);
export const CorrectReadingForm = lazyForm<ComponentProps<typeof Kit.CorrectReadingForm>>('CorrectReadingForm', () =>
  kit().then((m) => m.CorrectReadingForm),
);
export const MaintenancePanel = lazyForm<ComponentProps<typeof Kit.MaintenancePanel>>('MaintenancePanel', () =>
  kit().then((m) => m.MaintenancePanel),
);
export const RegisterRigForm = lazyForm<ComponentProps<typeof Kit.RegisterRigForm>>('RegisterRigForm', () =>
  kit().then((m) => m.RegisterRigForm),
);
export const ServiceDatesPanel = lazyForm<ComponentProps<typeof Kit.ServiceDatesPanel>>('ServiceDatesPanel', () =>
  kit().then((m) => m.ServiceDatesPanel),
);
