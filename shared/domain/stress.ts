/**
 * Stress kinds and the family each belongs to — declared once; every file that must know whether
 * a plan reverse-biases its devices or powers them imports it from here.
 *
 * Trade names (JEDEC / MIL terms), not product names:
 * htrb: high-temperature reverse bias (JESD22-A108)
 * hotl: powered (high-temperature) operating life (MIL-PRF-19500 group C life)
 * iol:  intermittent operating life, power on/off cycling (MIL-STD-750 method 1037)
 * thb:  temperature-humidity-bias (JESD22-A101)
 * tc:   temperature cycling, air-to-air in a chamber, unbiased (JESD22-A104)
 * htsl: high-temperature storage life, unbiased bake (JESD22-A103)
 * ac:   autoclave, 121 °C / 100 % RH / 2 atm, unbiased (JESD22-A102), or unbiased HAST (JESD22-A118)
 */
export const PLAN_KINDS = ['htrb', 'hotl', 'iol', 'thb', 'tc', 'htsl', 'ac'] as const;
export type PlanKind = (typeof PLAN_KINDS)[number];

/**
 * reverse-bias: collector-base reverse biased, no forward current (leakage only) — htrb, thb.
 * powered: forward-biased and dissipating (VCE with IB or a regulated IC) — hotl, iol.
 * unbiased: no socket bias at all; the devices sit loaded in a chamber (by count or serial list,
 *   not in sockets) and the chamber's air is the stress — tc, htsl, ac. No runaway judge (nothing
 *   dissipates), no bias command; the chamber's temperature excursions still alarm.
 */
export type StressFamily = 'reverse-bias' | 'powered' | 'unbiased';

export const STRESS_FAMILY: Record<PlanKind, StressFamily> = {
  htrb: 'reverse-bias',
  thb: 'reverse-bias',
  hotl: 'powered',
  iol: 'powered',
  tc: 'unbiased',
  htsl: 'unbiased',
  ac: 'unbiased',
};

export const isReverseBiasKind = (kind: PlanKind): boolean => STRESS_FAMILY[kind] === 'reverse-bias';
export const isPoweredKind = (kind: PlanKind): boolean => STRESS_FAMILY[kind] === 'powered';
/** Kinds run in a chamber with no socket bias (tc, htsl, ac): booked as chamber time, loaded by count. */
export const isUnbiasedKind = (kind: PlanKind): boolean => STRESS_FAMILY[kind] === 'unbiased';
/** Kinds whose chamber also holds humidity (JESD22-A101; the autoclave's saturated steam, JESD22-A102/A118). */
export const isHumidityKind = (kind: PlanKind): boolean => kind === 'thb' || kind === 'ac';
/** Kinds that switch power on and off in cycles (MIL-STD-750 method 1037). */
export const isCyclingKind = (kind: PlanKind): boolean => kind === 'iol';
/** Kinds whose chamber air cycles between two extremes (JESD22-A104): counted in cycles, not hours. */
export const isThermalCyclingKind = (kind: PlanKind): boolean => kind === 'tc';
/** Kinds whose read points and end are counted in cycles (power cycling or temperature cycling). */
export const countsInCycles = (kind: PlanKind): boolean => isCyclingKind(kind) || isThermalCyclingKind(kind);

/** The reverse-bias kinds as a set, for hot paths that hold a kind read from the database as a string. */
export const REVERSE_BIAS_KINDS: ReadonlySet<string> = new Set(PLAN_KINDS.filter(isReverseBiasKind));
/** The unbiased (chamber) kinds as a set, for SQL lists and strings read back from the database. */
export const UNBIASED_KINDS: ReadonlySet<string> = new Set(PLAN_KINDS.filter(isUnbiasedKind));
/** Whether a kind read back as a string (database, fleet file) is a powered one. */
export const isPoweredKindName = (kind: string): boolean =>
  (PLAN_KINDS as readonly string[]).includes(kind) && isPoweredKind(kind as PlanKind);
/** Whether a kind read back as a string is an unbiased chamber kind. */
export const isUnbiasedKindName = (kind: string): boolean => UNBIASED_KINDS.has(kind);

export const PLAN_KIND_LABEL: Record<PlanKind, string> = {
  htrb: 'High-temperature reverse bias',
  hotl: 'Powered operating life',
  iol: 'Intermittent operating life',
  thb: 'Temperature-humidity-bias',
  tc: 'Temperature cycling',
  htsl: 'High-temperature storage life',
  ac: 'Autoclave / unbiased humidity',
};
