import { DevicesScreen } from '@/components/devices/DevicesScreen';

export default DevicesScreen;
