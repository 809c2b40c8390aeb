import { DeviceHistoryScreen } from '@/components/devices/DeviceHistoryScreen';

export default DeviceHistoryScreen;
