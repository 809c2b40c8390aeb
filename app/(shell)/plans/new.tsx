import { PlanFormScreen } from '@/components/forms/LazyForms';

export default PlanFormScreen;
