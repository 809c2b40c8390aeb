import { DeviceTypeDetailScreen } from '@/components/devices/DeviceTypeDetailScreen';

export default DeviceTypeDetailScreen;
