import { LotDetailScreen } from '@/components/trends/LotDetailScreen';

export default LotDetailScreen;
