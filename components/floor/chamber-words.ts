/**
 * A chamber's words for the floor tile and its page (rig kind 'chamber': tc / htsl / ac). Own
 * module, zod-free: the floor imports it without the chamber page.
 */
import type { FloorChamber, FloorTile } from '@/shared/schemas/floor';
import { CHAMBER_CAUTION, CHAMBER_STEP_LABEL } from '@/shared/domain/chamber-methods';
import { grouped } from '@/shared/domain/format';

export const CHAMBER_TYPE_LABEL: Record<FloorChamber['type'], string> = {
  cycling: 'Temperature-cycling chamber',
  vessel: 'Autoclave · pressure vessel',
  oven: 'Storage oven',
};

/** "Ramp to the hot extreme · cycle 21 of 1,000" (tc under way), the step alone otherwise. */
export function chamberStepText(c: FloorChamber, runState: string | null): string {
  const step = CHAMBER_STEP_LABEL[c.step];
  if (!c.cycles) return step;
  const under = runState === 'stressing' || runState === 'heating';
  return under && c.cycles.done < c.cycles.target
    ? `${step} · cycle ${grouped(c.cycles.done + 1)} of ${grouped(c.cycles.target)}`
    : `${step} · ${grouped(c.cycles.done)} of ${grouped(c.cycles.target)} cycles done`;
}

const c1 = (x: number | null) => (x === null ? '—' : `${x.toFixed(1)} °C`);

/** "Air 131.9 °C · set 132.5 °C · 100 % RH · 205 kPa" */
export function chamberAirText(c: FloorChamber): string {
  if (c.reportAt === null) return 'No report from the chamber yet';
  return [
    `Air ${c1(c.airC)}`,
    c.setpointC !== null ? `set ${c1(c.setpointC)}` : null,
    c.humidityPct !== null ? `${c.humidityPct.toFixed(0)} % RH` : null,
    c.pressureKPa !== null ? `${c.pressureKPa.toFixed(0)} kPa` : null,
    c.doorOpen ? 'door open' : null,
  ]
    .filter(Boolean)
    .join(' · ');
}

export const chamberLoadText = (c: FloorChamber): string => c1(c.loadC);

/** Which stress's caution applies: the running plan's kind, else what the chamber is built for. */
export function chamberCautionText(c: FloorChamber): string {
  const k = c.planKind === 'tc' || c.planKind === 'htsl' || c.planKind === 'ac' ? c.planKind : null;
  return CHAMBER_CAUTION[k ?? (c.type === 'cycling' ? 'tc' : c.type === 'vessel' ? 'ac' : 'htsl')];
}

/** The tile's accessible name for a chamber. */
export function chamberTileLabel(t: FloorTile & { chamber: FloorChamber }, stateLabel: string): string {
  const c = t.chamber;
  return [
    `Chamber ${t.code}, ${stateLabel}`,
    `load ${chamberLoadText(c)}`,
    chamberAirText(c),
    chamberStepText(c, t.run?.state ?? null),
    `${c.loaded} devices loaded`,
    `${c.excursionAlarms} excursion alarms, ${t.openAlarms} open alarms`,
    t.run ? `run ${t.run.code}` : 'no run',
  ].join('; ');
}
