/** How alarm severities and numbers read on screen. Severity always shows as text + shape, never colour alone. */
import type { Tone } from '@/components/theme/tokens';
import { ALARM_KIND_LABEL, SEVERITY_LABEL } from '@/shared/domain/alarms';
import type { Alarm, AlarmSeverityName } from '@/shared/schemas/alarms';

export const SEVERITY_TONE: Record<AlarmSeverityName, Tone> = { critical: 'danger', warning: 'attention', info: 'info' };

export function severityLabel(s: AlarmSeverityName): string {
  return SEVERITY_LABEL[s];
}

export function kindLabel(a: Pick<Alarm, 'kind'>): string {
  return ALARM_KIND_LABEL[a.kind] ?? a.kind;
}

/** "OV-03 · socket 5 · run HTRB-2611-A" */
export function whereText(a: Pick<Alarm, 'rigCode' | 'socketIndex' | 'runCode'>): string {
  return [
    a.rigCode ? `Rig ${a.rigCode}` : null,
    a.socketIndex !== null ? `socket ${a.socketIndex}` : null,
    a.runCode ? `run ${a.runCode}` : null,
  ]
    .filter(Boolean)
    .join(' · ');
}

type Fmt = (v: number) => string;
const c1: Fmt = (v) => `${v.toFixed(1)} °C`;
const NUMBER_LABELS: Array<[string, string, Fmt]> = [
  ['tjC', 'Junction estimate', c1],
  ['tjMaxC', 'Tj max (rating)', c1],
  ['marginC', 'Margin to Tj max', (v) => `${v.toFixed(1)} °C`],
  ['loopGain', 'Loop gain θ·∂P/∂Tj', (v) => v.toFixed(2)],
  ['secondsToTjMax', 'Tj max projected in', (v) => `${Math.round(v)} s`],
  ['slopeCPerS', 'Junction rising at', (v) => `${v.toFixed(3)} °C/s`],
  ['caseC', 'Case', c1],
  ['chamberC', 'Chamber', c1],
  ['setC', 'Chamber set point', c1],
  ['bandC', 'Band (±)', c1],
  ['deviationC', 'Deviation', (v) => `${v.toFixed(1)} °C`],
  ['lastChamberC', 'Last chamber reading', c1],
  ['vV', 'Voltage', (v) => `${Number(v.toPrecision(4))} V`],
  ['iA', 'Current', amps],
  ['powerW', 'Dissipation', (v) => `${v.toFixed(2)} W`],
  ['measured', 'Measured', (v) => String(Number(v.toPrecision(4)))],
  ['set', 'Plan', (v) => String(Number(v.toPrecision(4)))],
  ['tolerancePct', 'Tolerance (±)', (v) => `${v} %`],
  ['deviationPct', 'Off by', (v) => `${v.toFixed(1)} %`],
  ['fromA', 'Current before', amps],
  ['toA', 'Current after', amps],
  ['ratio', 'Rise', (v) => `×${Number(v.toPrecision(3))}`],
  ['elapsedStressH', 'Stress hours since heating began', (v) => v.toFixed(1)],
  ['attempts', 'Attempts', (v) => String(v)],
  // The thermal path flag (server/modules/thermal).
  ['thetaCPerW', 'θ case–chamber now', (v) => `${Number(v.toPrecision(3))} °C/W`],
  ['baselineThetaCPerW', 'θ first in this run', (v) => `${Number(v.toPrecision(3))} °C/W`],
  ['riseFraction', 'θ risen by', (v) => `${Math.round(v * 100)} %`],
  ['tauS', 'Time constant τ', (v) => `${Math.round(v)} s`],
  ['rmsC', 'Fit RMS', (v) => `${v.toFixed(2)} K`],
];

function amps(v: number): string {
  const a = Math.abs(v);
  if (a === 0) return '0 A';
  if (a < 1e-6) return `${Number((v * 1e9).toPrecision(3))} nA`;
  if (a < 1e-3) return `${Number((v * 1e6).toPrecision(3))} µA`;
  if (a < 1) return `${Number((v * 1e3).toPrecision(3))} mA`;
  return `${Number(v.toPrecision(3))} A`;
}

/** The alarm's numbers as label/value pairs, in a fixed, meaningful order. */
export function alarmNumbers(details: Record<string, unknown>): Array<{ label: string; value: string }> {
  const out: Array<{ label: string; value: string }> = [];
  for (const [key, label, fmt] of NUMBER_LABELS) {
    const v = details[key];
    if (typeof v === 'number' && Number.isFinite(v)) out.push({ label, value: fmt(v) });
  }
  if (typeof details.deviceSerial === 'string') out.push({ label: 'Device', value: details.deviceSerial });
  if (typeof details.command === 'string') out.push({ label: 'Trip command', value: details.command });
  return out;
}
