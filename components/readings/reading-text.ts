/** One reading in a line, for the readings screen and the lot's corrected readings (kept small: both chunks load it). */
import { MEASUREMENT_RESULT_LABEL, type MeasurementResult } from '@/shared/evidence';

const num = (v: number | null, digits: number) => (v === null ? '–' : String(+v.toPrecision(digits)));

/** "hFE 121.5 · ICBO 20 nA · VCE(sat) 220 mV", or the dead-device result. */
export function readingText(r: { result: MeasurementResult; hfe: number | null; icboA: number | null; vcesatV: number | null }): string {
  if (r.result !== 'measured') return MEASUREMENT_RESULT_LABEL[r.result];
  return `hFE ${num(r.hfe, 5)} · ICBO ${num(r.icboA === null ? null : r.icboA * 1e9, 4)} nA · VCE(sat) ${num(r.vcesatV === null ? null : r.vcesatV * 1000, 4)} mV`;
}
