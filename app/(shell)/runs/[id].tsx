import { useLocalSearchParams } from 'expo-router';
import { RunDetailScreen } from '@/components/runs/RunDetailScreen';

export default function RunRoute() {
  const { id } = useLocalSearchParams<{ id: string }>();
  return <RunDetailScreen id={typeof id === 'string' ? id : ''} />;
}
