import { ReadingsScreen } from '@/components/readings/ReadingsScreen';

export default ReadingsScreen;
