import { DeviceTypeScreen } from '@/components/trends/DeviceTypeScreen';

export default DeviceTypeScreen;
