import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { EmptyState } from '@/components/ui/EmptyState';
import { SafetyCaution } from '@/components/ui/SafetyCaution';

interface Props {
  title: string;
  subtitle: string;
  /** What this page will show once its feature lands. */
  coming: string;
  /** Pages about energised rigs carry the safety caution from day one. */
  caution?: boolean;
}

/** Stand-in used by routes whose feature screens have not landed yet. */
export function PlaceholderScreen({ title, subtitle, coming, caution }: Props) {
  return (
    <Screen>
      <Header title={title} subtitle={subtitle} />
      {caution ? <SafetyCaution /> : null}
      <EmptyState title="Nothing to show yet" message={coming} />
    </Screen>
  );
}
