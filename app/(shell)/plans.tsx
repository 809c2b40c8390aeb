// Placeholder until the plans screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function PlansRoute() {
  return <PlaceholderScreen title="Plans" subtitle="Stress plans checked against the device's limits." coming="Stress plans will appear here." />;
}
