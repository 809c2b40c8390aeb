import { grouped } from '@/shared/domain/format';

/** Number formatting for drift tables: significant digits, a true minus sign, "—" for missing. */
export function sig(v: number | null | undefined, digits = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const s = String(+v.toPrecision(digits));
  return s.startsWith('-') ? `−${s.slice(1)}` : s;
}

export function pct(v: number | null | undefined, digits = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return `${v > 0 ? '+' : ''}${sig(v, digits)} %`;
}

export function hours(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return `${grouped(Math.round(v))} h`;
}

export function amps(a: number | null | undefined): string {
  if (a === null || a === undefined || !Number.isFinite(a)) return '—';
  const abs = Math.abs(a);
  if (abs >= 1e-3) return `${sig(a * 1e3)} mA`;
  if (abs >= 1e-6) return `${sig(a * 1e6)} µA`;
  if (abs >= 1e-9) return `${sig(a * 1e9)} nA`;
  return `${sig(a * 1e12)} pA`;
}

export const PARAM_LABEL = { hfe: 'hFE', icbo: 'ICBO', vcesat: 'VCE(sat)' } as const;
