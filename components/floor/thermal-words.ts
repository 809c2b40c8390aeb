/** Words and numbers of the socket thermal model on screens (Emberlot's own). */
import type { ThermalFit, ThermalTrend } from '@/shared/schemas/thermal';

export const TRIGGER_LABEL: Record<ThermalFit['trigger'], string> = {
  'bias-on': 'bias on',
  'power-step': 'power step',
  periodic: 'running',
};

const sig = (x: number, digits = 3) => String(Number(x.toPrecision(digits)));

export const thetaText = (x: number | null) => (x === null ? '—' : `${sig(x)} °C/W`);
export const tauText = (x: number | null) => (x === null ? '—' : x >= 600 ? `${sig(x / 60)} min` : `${sig(x)} s`);

/** "R² 0.991, RMS 0.21 K · step response, 20 samples" — the fit's quality in one line. */
export function thermalFitQuality(f: ThermalFit): string {
  const parts: string[] = [];
  if (f.r2 !== null) parts.push(`R² ${f.r2.toFixed(3)}`);
  if (f.rmsC !== null) parts.push(`RMS ${f.rmsC.toFixed(2)} K`);
  const how = f.method === 'arx' ? 'step response' : 'steady state';
  return `${parts.join(', ')} · ${how}, ${f.samples} samples`;
}

/** "+31 % (flag above +25 %)". */
export function thermalRiseText(theta: number | null, baseline: number, limit: number): string {
  if (theta === null || !(baseline > 0)) return '—';
  const r = theta / baseline - 1;
  const pct = (x: number) => `${x >= 0 ? '+' : '−'}${Math.abs(Math.round(x * 100))} %`;
  return `${pct(r)} (flag above ${pct(limit)})`;
}

/** "0.84 °C/W per 100 h": a θ slope per stress hour, shown per 100 h (2 significant figures). */
const minus = (x: string) => x.replace('-', '−');
export const slopePer100hText = (cPerWPerH: number) => `${minus(String(Number((cPerWPerH * 100).toPrecision(2))))} °C/W per 100 h`;

/** "+0.84 °C/W per 100 h (90 % interval 0.7 to 1), 14 fits over 26 h" — the trend rule's slope with its interval. */
export function trendSlopeText(t: ThermalTrend, confidence: number): string {
  const sign = t.slopeCPerWPerH > 0 ? '+' : '';
  const per = (x: number) => minus(String(Number((x * 100).toPrecision(2))));
  return (
    `${sign}${slopePer100hText(t.slopeCPerWPerH)} (${Math.round(confidence * 100)} % interval ${per(t.lowCPerWPerH)} to ${per(t.highCPerWPerH)}), ` +
    `${t.n} fits over ${Math.round(t.spanH)} h`
  );
}

/** What the trend rule concludes, in the operator's words. */
export function trendOutlookText(t: ThermalTrend, limitFraction: number): string {
  const line = `+${Math.round(limitFraction * 100)} %`;
  if (!t.significant) return `No significant rise (Mann–Kendall p ${t.pValue.toFixed(2)})`;
  if (t.hoursToLimit === null) return 'Falling';
  const h = t.hoursToLimit < 10 ? t.hoursToLimit.toFixed(1) : String(Math.round(t.hoursToLimit));
  return t.fires
    ? `Rising: reaches ${line} in about ${h} h (within the ${Math.round(t.horizonH)} h horizon)`
    : `Rising, but ${line} is about ${h} h away (beyond the ${Math.round(t.horizonH)} h horizon)`;
}
