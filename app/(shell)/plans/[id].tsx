import { PlanDetailScreen } from '@/components/plans/PlanDetailScreen';

export default PlanDetailScreen;
