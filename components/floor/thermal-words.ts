/** Words and numbers of the socket thermal model on screens (Emberlot's own). */
import type { ThermalFit } from '@/shared/schemas/thermal';

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
