import { AlarmsScreen } from '@/components/alarms/AlarmsScreen';

export default AlarmsScreen;
