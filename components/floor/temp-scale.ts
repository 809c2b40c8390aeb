/**
 * Case-temperature scale for the socket board. Seven fixed bands on one warm sequential ramp whose
 * lightness falls steadily from cream to dark brick, so neighbouring bands differ in lightness as
 * well as hue and the order survives every kind of colour-vision deficiency (and greyscale). Each
 * socket also prints its value, so colour is never the only carrier; trips and empty sockets use
 * patterns and words, not colours.
 */
export interface TempBand {
  /** Lower bound in °C (inclusive); -Infinity for the first band. */
  from: number;
  /** Upper bound (exclusive); Infinity for the last. */
  to: number;
  fill: string;
  /** Text colour on this fill (≥ 4.5:1). */
  ink: string;
  label: string;
}

const DARK = '#24221F';
const LIGHT = '#FFFDF8';

export const TEMP_BANDS: readonly TempBand[] = [
  { from: -Infinity, to: 60, fill: '#FFF6DF', ink: DARK, label: 'below 60' },
  { from: 60, to: 90, fill: '#FBE3A8', ink: DARK, label: '60–90' },
  { from: 90, to: 120, fill: '#F4C46F', ink: DARK, label: '90–120' },
  { from: 120, to: 140, fill: '#E99A45', ink: DARK, label: '120–140' },
  { from: 140, to: 160, fill: '#B4551F', ink: LIGHT, label: '140–160' },
  { from: 160, to: 180, fill: '#9C3F1C', ink: LIGHT, label: '160–180' },
  { from: 180, to: Infinity, fill: '#5E2210', ink: LIGHT, label: '180 and above' },
];

export function bandFor(c: number | null | undefined): TempBand | null {
  if (c === null || c === undefined || !Number.isFinite(c)) return null;
  return TEMP_BANDS.find((b) => c >= b.from && c < b.to) ?? TEMP_BANDS[TEMP_BANDS.length - 1];
}

export const fmtC = (c: number | null | undefined, digits = 1) => (c === null || c === undefined ? '—' : `${c.toFixed(digits)} °C`);
