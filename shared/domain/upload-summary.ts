/**
 * One message for a checked read-point file, from its row counts. Every row is counted once:
 * new + replace + already stored + refused = rows. A file identical (same bytes) to one stored for
 * this run says so and offers nothing to store; it never also says that rows "replace" readings.
 */

export interface UploadCounts {
  rowsTotal: number;
  inserted: number;
  replaced: number;
  unchanged: number;
  rejected: number;
  late: number;
}

const rows = (n: number) => `${n} ${n === 1 ? 'row' : 'rows'}`;

/** Do the counts add up to the rows of the file? */
export const countsAddUp = (c: UploadCounts) => c.inserted + c.replaced + c.unchanged + c.rejected === c.rowsTotal;

/**
 * `storedBefore`: when this exact file was stored for the run (formatted by the caller), if it was.
 * The same file is stored once, so a re-check of it never offers rows to store.
 */
export function checkSummary(c: UploadCounts, storedBefore?: string): { text: string; storable: number } {
  const refused = c.rejected ? `; ${rows(c.rejected)} refused` : '';
  if (storedBefore) {
    const changes = c.inserted + c.replaced;
    if (changes === 0) {
      return {
        text: `${rows(c.rowsTotal)}: identical to the file stored on ${storedBefore}, nothing to store (${c.unchanged} already stored${refused}).`,
        storable: 0,
      };
    }
    return {
      text:
        `${rows(c.rowsTotal)}: this exact file was stored on ${storedBefore}; read with the columns chosen now, ` +
        `${c.replaced} replace a stored reading and ${c.inserted} are new (${c.unchanged} already stored${refused}). ` +
        'The same file is stored once: to change readings, send a corrected file with a reason.',
      storable: 0,
    };
  }
  return {
    text:
      `${rows(c.rowsTotal)}: ${c.inserted} new, ${c.replaced} replace a stored reading${c.replaced ? ' (needs a reason)' : ''}, ` +
      `${c.unchanged} already stored, ${c.rejected} refused${c.late ? `, ${c.late} late` : ''}.`,
    storable: c.inserted + c.replaced,
  };
}
