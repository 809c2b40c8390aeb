// Placeholder until the alarms screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function AlarmsRoute() {
  return (
    <PlaceholderScreen
      title="Alarms"
      subtitle="What needs a person now, newest first."
      coming="Open alarms from rigs and the protection logic will be listed here, with who acknowledged them and when."
    />
  );
}
