import { TrendsScreen } from '@/components/trends/TrendsScreen';

export default TrendsScreen;
