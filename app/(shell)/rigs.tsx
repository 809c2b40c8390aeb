import { RigsScreen } from '@/components/rigs/RigsScreen';

export default RigsScreen;
