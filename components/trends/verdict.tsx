import { LOT_VERDICT_LABEL } from '@/shared/domain/verdicts';
import type { LotVerdict } from '@/shared/schemas/analytics';
import type { Tone } from '@/components/theme/tokens';
import { StatusPill } from '@/components/ui/StatusPill';

/** Each verdict has a tone and therefore a shape (StatusShape) as well as its word: never colour alone. */
export const VERDICT_TONE: Record<LotVerdict, Tone> = {
  passed: 'ok',
  drifting: 'attention',
  failed: 'danger',
  incomplete: 'attention',
  'insufficient-sample': 'attention',
  'in-progress': 'info',
  untested: 'idle',
};

/** Worst first, for sorting: the same order that combines a lot's plans. */
export { VERDICT_RANK as VERDICT_ORDER } from '@/shared/verdict/rules';

export function VerdictPill({ verdict, size = 'sm' }: { verdict: LotVerdict; size?: 'sm' | 'md' }) {
  return <StatusPill tone={VERDICT_TONE[verdict]} label={LOT_VERDICT_LABEL[verdict]} size={size} testID={`verdict-${verdict}`} />;
}
