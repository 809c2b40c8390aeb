import { PlanFormScreen } from '@/components/plans/PlanFormScreen';

export default PlanFormScreen;
