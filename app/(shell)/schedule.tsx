import { ScheduleScreen } from '@/components/schedule/ScheduleScreen';

export default ScheduleScreen;
