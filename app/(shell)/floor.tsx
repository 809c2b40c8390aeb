// Placeholder until the floor screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function FloorRoute() {
  return (
    <PlaceholderScreen
      title="Floor"
      subtitle="Every oven and rig in the lab, live."
      coming="Rig tiles with oven temperature, bias and socket states will appear here, with trips and runaway warnings as they happen."
      caution
    />
  );
}
