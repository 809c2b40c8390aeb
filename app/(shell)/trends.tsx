// Placeholder until the trends screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function TrendsRoute() {
  return <PlaceholderScreen title="Lot trends" subtitle="Drift per lot against time zero." coming="Lot drift trends will appear here." />;
}
