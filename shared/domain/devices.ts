/**
 * Device kinds, polarities and the serial-number rules — no zod here, so screens that use them do
 * not load the validation library (shared/schemas/devices.ts builds its schemas from these).
 */

export const DEVICE_KINDS = ['bjt', 'mosfet', 'diode'] as const;
export const POLARITIES = ['NPN', 'PNP', 'N-channel', 'P-channel', 'rectifier'] as const;
export type DeviceKind = (typeof DEVICE_KINDS)[number];
export type Polarity = (typeof POLARITIES)[number];

/**
 * The polarities each device class can have (common practice: a bipolar transistor is NPN or PNP,
 * a MOSFET N- or P-channel, a rectifier diode has no polarity to choose — it is stored as
 * 'rectifier'). The form offers only these; the API refuses any other pairing.
 */
export const POLARITIES_BY_KIND: Record<DeviceKind, readonly Polarity[]> = {
  bjt: ['NPN', 'PNP'],
  mosfet: ['N-channel', 'P-channel'],
  diode: ['rectifier'],
};

/** The device class's only polarity when there is nothing to choose (a rectifier), else undefined. */
export const impliedPolarity = (kind: DeviceKind): Polarity | undefined =>
  POLARITIES_BY_KIND[kind].length === 1 ? POLARITIES_BY_KIND[kind][0] : undefined;

export const polarityFits = (kind: DeviceKind, polarity: Polarity): boolean => POLARITIES_BY_KIND[kind].includes(polarity);

/** Words for the device classes, as the form shows them. */
export const DEVICE_KIND_LABEL: Record<DeviceKind, string> = { bjt: 'Bipolar (BJT)', mosfet: 'MOSFET', diode: 'Diode (rectifier)' };

/** Longest serial a device may have (database column width). */
export const SERIAL_MAX_LENGTH = 40;

/** One refused serial: its row (1-based position in the list, or line of the file) and why. */
export interface SerialRowProblem {
  row: number;
  serial: string;
  reason: string;
}

/** Splits a pasted list: one serial per line, or separated by commas, semicolons or tabs; blank entries are dropped. */
export function splitPastedSerials(text: string): string[] {
  return text
    .split(/[\r\n,;\t]/)
    .map((s) => s.trim())
    .filter((s) => s !== '');
}

/**
 * Checks a list of candidate serials: trims each, then reports every empty one, every one longer
 * than SERIAL_MAX_LENGTH, every one with a control character, every repeat of an earlier row, and
 * every one already in the lot.
 * `rowOf(i)` maps a list index to the row number shown to the person (position or file line).
 */
export function checkSerialRows(
  candidates: string[],
  existing: ReadonlySet<string>,
  rowOf: (index: number) => number = (i) => i + 1,
  lotCode = 'the lot',
): { serials: string[]; problems: SerialRowProblem[] } {
  const serials: string[] = [];
  const problems: SerialRowProblem[] = [];
  const firstRow = new Map<string, number>();
  candidates.forEach((raw, i) => {
    const serial = raw.trim();
    const row = rowOf(i);
    if (serial === '') problems.push({ row, serial, reason: 'Empty serial' });
    else if (serial.length > SERIAL_MAX_LENGTH) problems.push({ row, serial, reason: `Longer than ${SERIAL_MAX_LENGTH} characters` });
    else if (/[\u0000-\u001f\u007f]/.test(serial)) problems.push({ row, serial, reason: 'Contains a line break or control character' });
    else if (firstRow.has(serial)) problems.push({ row, serial, reason: `Duplicate of row ${firstRow.get(serial)}` });
    else if (existing.has(serial)) problems.push({ row, serial, reason: `Already in ${lotCode}` });
    else {
      firstRow.set(serial, row);
      serials.push(serial);
    }
  });
  return { serials, problems };
}
