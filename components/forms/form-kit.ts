/**
 * Every form that validates with zod, in one module loaded only through LazyForms' dynamic import.
 * zod and the request schemas are a large part of the app's JavaScript; the web export puts what two
 * or more lazy chunks share into the common chunk that loads with sign-in, so the forms share one
 * chunk of their own and zod stays out of sign-in and the floor (tests/unit/lazy-kits.test.ts).
 */
export { DeviceTypeForm } from '@/components/devices/DeviceTypeForm';
export { NewLotForm } from '@/components/devices/NewLotForm';
export { LotTraceabilityForm } from '@/components/devices/LotTraceabilityForm';
export { AddPersonForm } from '@/components/people/AddPersonForm';
export { PlanFormScreen } from '@/components/plans/PlanFormScreen';
export { ManualEntryForm } from '@/components/readings/ManualEntryForm';
export { CorrectReadingForm } from '@/components/readings/CorrectReadingForm';
export { MaintenancePanel } from '@/components/rigs/MaintenancePanel';
export { RegisterRigForm } from '@/components/rigs/RegisterRigForm';
export { ServiceDatesPanel } from '@/components/rigs/ServiceDatesPanel';
