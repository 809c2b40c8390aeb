// Placeholder until the readings screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function ReadingsRoute() {
  return <PlaceholderScreen title="Read points" subtitle="Measurements at each read point." coming="Read-point uploads will appear here." />;
}
