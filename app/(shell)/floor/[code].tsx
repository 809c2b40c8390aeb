import { RigScreen } from '@/components/floor/RigScreen';

export default RigScreen;
