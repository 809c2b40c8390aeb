import { LotDetailScreen } from '@/components/devices/LotDetailScreen';

export default LotDetailScreen;
