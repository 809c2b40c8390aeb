// Placeholder until the rig screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function RigsRoute() {
  return (
    <PlaceholderScreen
      title="Rigs"
      subtitle="The burn-in rigs, their sockets and limits."
      coming="Each rig's socket count, voltage and temperature limits, and its connection state will appear here."
      caution
    />
  );
}
