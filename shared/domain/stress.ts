/**
 * Stress kinds and the family each belongs to — declared once; every file that must know whether
 * a plan reverse-biases its devices or powers them imports it from here.
 *
 * Trade names (JEDEC / MIL terms), not product names:
 * htrb: high-temperature reverse bias (JESD22-A108)
 * hotl: powered (high-temperature) operating life (MIL-PRF-19500 group C life)
 * iol:  intermittent operating life, power on/off cycling (MIL-STD-750 method 1037)
 * thb:  temperature-humidity-bias (JESD22-A101)
 */
export const PLAN_KINDS = ['htrb', 'hotl', 'iol', 'thb'] as const;
export type PlanKind = (typeof PLAN_KINDS)[number];

/**
 * reverse-bias: collector-base reverse biased, no forward current (leakage only) — htrb, thb.
 * powered: forward-biased and dissipating (VCE with IB or a regulated IC) — hotl, iol.
 */
export type StressFamily = 'reverse-bias' | 'powered';

export const STRESS_FAMILY: Record<PlanKind, StressFamily> = {
  htrb: 'reverse-bias',
  thb: 'reverse-bias',
  hotl: 'powered',
  iol: 'powered',
};

export const isReverseBiasKind = (kind: PlanKind): boolean => STRESS_FAMILY[kind] === 'reverse-bias';
export const isPoweredKind = (kind: PlanKind): boolean => STRESS_FAMILY[kind] === 'powered';
/** Kinds whose chamber also holds humidity (JESD22-A101). */
export const isHumidityKind = (kind: PlanKind): boolean => kind === 'thb';
/** Kinds that switch power on and off in cycles (MIL-STD-750 method 1037). */
export const isCyclingKind = (kind: PlanKind): boolean => kind === 'iol';

/** The reverse-bias kinds as a set, for hot paths that hold a kind read from the database as a string. */
export const REVERSE_BIAS_KINDS: ReadonlySet<string> = new Set(PLAN_KINDS.filter(isReverseBiasKind));
/** Whether a kind read back as a string (database, fleet file) is a powered one. */
export const isPoweredKindName = (kind: string): boolean =>
  (PLAN_KINDS as readonly string[]).includes(kind) && isPoweredKind(kind as PlanKind);

export const PLAN_KIND_LABEL: Record<PlanKind, string> = {
  htrb: 'High-temperature reverse bias',
  hotl: 'Powered operating life',
  iol: 'Intermittent operating life',
  thb: 'Temperature-humidity-bias',
};
