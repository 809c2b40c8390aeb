/** Date and time on a screen: "2026-03-03 14:05" in the viewer's time zone (the style of shared/domain/format.ts). */
import { formatLocal } from '@/shared/domain/format';
export function formatDateTime(iso: string | null | undefined, never = 'Never'): string {
  if (!iso) return never;
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return '—';
  return formatLocal(d);
}
