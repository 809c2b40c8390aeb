/**
 * Quantity and date wording — declared once for the screens, the exports (CSV/PDF), the API's
 * messages and the e-mails.
 *
 * Dates: one style, "2026-03-02 08:00" (year first, 24-hour clock; it reads the same in every
 * lab and sorts as text). What the server writes — messages, audit, exports, e-mail — is in UTC
 * and says so ("2026-03-02 08:00 UTC"), because its reader's zone is unknown; screens show the
 * same layout in the viewer's own zone, without a suffix.
 */

const pad = (v: number) => String(v).padStart(2, '0');
const toDate = (at: Date | string | number): Date => (at instanceof Date ? at : new Date(at));

/** "2026-03-02 08:00 UTC" — server-side texts (messages, audit, exports, e-mail). */
export function formatUtc(at: Date | string | number): string {
  const d = toDate(at);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())} ${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())} UTC`;
}

/** "2026-03-02 09:00" in the zone of whoever runs it — screens. */
export function formatLocal(at: Date | string | number): string {
  const d = toDate(at);
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())} ${pad(d.getHours())}:${pad(d.getMinutes())}`;
}

/** "2026-03-02" in the viewer's zone — a day on its own (axis ticks of a week or more). */
export function formatLocalDate(at: Date | string | number): string {
  const d = toDate(at);
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

/** "09:00" (or "09:00:05" with seconds) in the viewer's zone — a time on its own (chart axes, today's events). */
export function formatLocalTime(at: Date | string | number, withSeconds = false): string {
  const d = toDate(at);
  const hm = `${pad(d.getHours())}:${pad(d.getMinutes())}`;
  return withSeconds ? `${hm}:${pad(d.getSeconds())}` : hm;
}

/**
 * Compact form for dense places: the time alone when `at` falls on the same local day as `now`,
 * else the full date and time — the same year-first style, never a month name.
 */
export function formatLocalCompact(at: Date | string | number, now: Date | number = Date.now()): string {
  const d = toDate(at);
  return formatLocalDate(d) === formatLocalDate(toDate(now)) ? formatLocalTime(d) : formatLocal(d);
}

/**
 * A count with its noun in the right number: (1, 'row') → "1 row", (5, 'row') → "5 rows",
 * (2, 'reply', 'replies') → "2 replies". Thousands are grouped ("15,000 rows").
 */
export function countOf(n: number, singular: string, plural = `${singular}s`): string {
  return `${grouped(n)} ${n === 1 ? singular : plural}`;
}

/** The noun alone in the right number for `n`, for sentences that put the count elsewhere. */
export const nounFor = (n: number, singular: string, plural = `${singular}s`): string => (n === 1 ? singular : plural);

/** A finite number to `digits` significant figures without float noise ("0.3", "1.23e-7" stays exact). */
export function sigFigures(x: number, digits = 3): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  return String(+x.toPrecision(digits));
}

/** A finite quantity with an SI prefix (n, µ, m) where it helps: 2.5e-4 A → "250 µA". */
export function withSiPrefix(x: number, unit: string, digits = 3): string {
  const a = Math.abs(x);
  if (a !== 0 && a < 1e-6) return `${sigFigures(x * 1e9, digits)} n${unit}`;
  if (a !== 0 && a < 1e-3) return `${sigFigures(x * 1e6, digits)} µ${unit}`;
  if (a !== 0 && a < 1) return `${sigFigures(x * 1e3, digits)} m${unit}`;
  return `${sigFigures(x, digits)} ${unit}`;
}

/** A count with thousands separators: 15000 → "15,000". */
export const grouped = (n: number): string => n.toLocaleString('en-GB');
