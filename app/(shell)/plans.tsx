import { PlansScreen } from '@/components/plans/PlansScreen';

export default PlansScreen;
