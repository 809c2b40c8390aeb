import type { CheckStatus } from '@/shared/schemas/plans';
import type { Tone } from '@/components/theme/tokens';
import { StatusPill } from '@/components/ui/StatusPill';

export const CHECK_STATUS: Record<CheckStatus, { tone: Tone; label: string }> = {
  block: { tone: 'danger', label: 'Refused by check' },
  warn: { tone: 'attention', label: 'Passes with warnings' },
  ok: { tone: 'ok', label: 'Passes check' },
  none: { tone: 'idle', label: 'Not checked' },
};

/** The plan check's verdict as tone + shape + words. */
export function CheckStatusPill({ status, size = 'md' }: { status: CheckStatus; size?: 'sm' | 'md' }) {
  const s = CHECK_STATUS[status];
  return <StatusPill tone={s.tone} label={s.label} size={size} testID={`check-status-${status}`} />;
}
