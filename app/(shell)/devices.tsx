// Placeholder until the devices screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function DevicesRoute() {
  return <PlaceholderScreen title="Devices & lots" subtitle="Part numbers, their ratings, and the lots under test." coming="Device types and lots will appear here." />;
}
