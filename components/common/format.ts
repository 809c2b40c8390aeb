/** Date and time as lab people read it: "3 Mar 2026, 14:05" in the viewer's time zone. */
export function formatDateTime(iso: string | null | undefined, never = 'Never'): string {
  if (!iso) return never;
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return '—';
  return d.toLocaleString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' });
}
