// Placeholder until the schedule screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function ScheduleRoute() {
  return (
    <PlaceholderScreen
      title="Schedule"
      subtitle="Which run sits on which rig, and when."
      coming="Booked and running stress runs will appear here on a timeline per rig."
    />
  );
}
