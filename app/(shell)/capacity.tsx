import { CapacityScreen } from '@/components/capacity/CapacityScreen';

export default CapacityScreen;
