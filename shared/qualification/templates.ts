/**
 * Qualification templates: the stress groups of the public qualification standards as pure data,
 * and the pure rules that turn a template and a set of lots into a matrix and each cell into a state.
 *
 * Every group names its source (standard, table or group, test method). `basis` says how far the
 * numbers can be trusted: 'published' — checked against a published text (shared/REFERENCE.md);
 * 'memory' — recalled, not checked against the text; the screens and the report then ask the
 * engineer in plain words to confirm against the standard's current revision.
 *
 * Plan kinds are strings so that groups of kinds another branch adds (tc, htsl, ac) match runs by
 * the kind stored on their plan as soon as those kinds exist.
 */
import { ON_RIG_STATES } from '../domain/run-states';
import type { LotVerdict } from '../domain/verdicts';
import {
  basisWords,
  CELL_STATE_LABEL,
  CELL_STATES,
  CONFIRM_WORDS,
  FAMILY_RULE_MIN,
  QUAL_STATUS_LABEL,
  QUAL_TEMPLATE_KEYS,
  WAIVER_REASON_MIN,
  type CellState,
  type QualificationStatus,
  type QualTemplateKey,
  type SourceBasis,
} from './words';

// The words and lists screens show live in words.ts (the templates' data stays out of the app's first load).
export {
  basisWords,
  CELL_STATE_LABEL,
  CELL_STATES,
  CONFIRM_WORDS,
  FAMILY_RULE_MIN,
  QUAL_STATUS_LABEL,
  QUAL_TEMPLATE_KEYS,
  WAIVER_REASON_MIN,
  type CellState,
  type QualificationStatus,
  type QualTemplateKey,
  type SourceBasis,
};

export const QUAL_PLAN_KINDS = ['htrb', 'hotl', 'iol', 'thb', 'tc', 'htsl', 'ac'] as const;
export type QualPlanKind = (typeof QUAL_PLAN_KINDS)[number];

export interface QualGroup {
  /** Stable key within the template (cells refer to it). */
  key: string;
  name: string;
  /** Plan kind whose runs satisfy the group; null: a recorded external result (ESD, DPA, …). */
  planKind: QualPlanKind | null;
  /** Test method and condition in words. */
  method: string;
  conditions: string;
  /** Lots the group asks for (cells are made for the first this many chosen lots). */
  lots: number;
  samplePerLot: number;
  acceptNumber: number;
  /** Surface-mount parts go through preconditioning (JESD22-A113) before this group. */
  preconditioned: boolean;
  /** Where the numbers come from (table / group of the standard). */
  source: string;
  basis: SourceBasis;
}

export interface QualTemplate {
  key: QualTemplateKey;
  name: string;
  standard: string;
  scope: string;
  /** The order of tests and preconditioning the standard sets, in words, with its source. */
  sequence: string;
  sequenceBasis: SourceBasis;
  groups: QualGroup[];
}

const PC = 'JESD22-A113 preconditioning';

/** AEC-Q101 (discretes), Table 2 test groups, Rev E as recalled (shared/REFERENCE.md A9: from memory). */
const AEC_Q101: QualTemplate = {
  key: 'aec-q101',
  name: 'AEC-Q101 discrete qualification',
  standard: 'AEC-Q101 Rev E, Table 2',
  scope: 'Discrete semiconductors for automotive use',
  sequence: `Electrical test before and after every stress. Surface-mount parts go through ${PC} before TC, AC, H3TRB and IOL; the other groups take parts straight from the line.`,
  sequenceBasis: 'memory',
  groups: [
    {
      key: 'htrb',
      name: 'High-temperature reverse bias (HTRB)',
      planKind: 'htrb',
      method: 'JESD22-A108',
      conditions: 'Tj at rated maximum, 80 % of rated breakdown, 1000 h',
      lots: 3,
      samplePerLot: 77,
      acceptNumber: 0,
      preconditioned: false,
      source: 'AEC-Q101 Table 2, test B1',
      basis: 'memory',
    },
    {
      key: 'tc',
      name: 'Temperature cycling (TC)',
      planKind: 'tc',
      method: 'JESD22-A104',
      conditions: '1000 cycles, −55 to +150 °C or the part’s range',
      lots: 3,
      samplePerLot: 77,
      acceptNumber: 0,
      preconditioned: true,
      source: 'AEC-Q101 Table 2, test A4',
      basis: 'memory',
    },
    {
      key: 'ac',
      name: 'Autoclave (AC)',
      planKind: 'ac',
      method: 'JESD22-A102',
      conditions: '121 °C, 100 % RH, 205 kPa, 96 h',
      lots: 3,
      samplePerLot: 77,
      acceptNumber: 0,
      preconditioned: true,
      source: 'AEC-Q101 Table 2, test A3',
      basis: 'memory',
    },
    {
      key: 'h3trb',
      name: 'High humidity, high temperature reverse bias (H3TRB)',
      planKind: 'thb',
      method: 'JESD22-A101',
      conditions: '85 °C, 85 % RH, 80 % of rated breakdown (max 100 V), 1000 h',
      lots: 3,
      samplePerLot: 77,
      acceptNumber: 0,
      preconditioned: true,
      source: 'AEC-Q101 Table 2, test A2',
      basis: 'memory',
    },
    {
      key: 'iol',
      name: 'Intermittent operational life (IOL)',
      planKind: 'iol',
      method: 'MIL-STD-750 method 1037',
      conditions: 'ΔTj ≥ 100 °C, 15,000 cycles at 2 min on / 2 min off',
      lots: 3,
      samplePerLot: 77,
      acceptNumber: 0,
      preconditioned: true,
      source: 'AEC-Q101 Table 2, test A5',
      basis: 'memory',
    },
    {
      key: 'esd-hbm',
      name: 'ESD, human body model',
      planKind: null,
      method: 'AEC-Q101-001',
      conditions: 'Classification to the highest passing level',
      lots: 1,
      samplePerLot: 30,
      acceptNumber: 0,
      preconditioned: false,
      source: 'AEC-Q101 Table 2, test E2',
      basis: 'memory',
    },
    {
      key: 'dpa',
      name: 'Destructive physical analysis (DPA)',
      planKind: null,
      method: 'AEC-Q101-004 section 4',
      conditions: 'Random parts after H3TRB and TC',
      lots: 1,
      samplePerLot: 2,
      acceptNumber: 0,
      preconditioned: false,
      source: 'AEC-Q101 Table 2, test C1',
      basis: 'memory',
    },
    {
      key: 'pd',
      name: 'Physical dimensions',
      planKind: null,
      method: 'JESD22-B100',
      conditions: 'To the package outline',
      lots: 1,
      samplePerLot: 30,
      acceptNumber: 0,
      preconditioned: false,
      source: 'AEC-Q101 Table 2, test C2',
      basis: 'memory',
    },
    {
      key: 'sd',
      name: 'Solderability',
      planKind: null,
      method: 'J-STD-002',
      conditions: 'Steam-aged leads, dip and look',
      lots: 1,
      samplePerLot: 10,
      acceptNumber: 0,
      preconditioned: false,
      source: 'AEC-Q101 Table 2, test C10',
      basis: 'memory',
    },
  ],
};

/** JESD47 (general use), Table of qualification stresses as recalled (from memory). */
const JESD47: QualTemplate = {
  key: 'jesd47',
  name: 'JESD47 stress-test-driven qualification',
  standard: 'JESD47, qualification stress table',
  scope: 'General-purpose semiconductor parts',
  sequence: `Electrical test before and after every stress. Surface-mount parts go through ${PC} before TC, THB and AC.`,
  sequenceBasis: 'memory',
  groups: [
    {
      key: 'htol',
      name: 'High-temperature operating life (HTOL)',
      planKind: 'hotl',
      method: 'JESD22-A108',
      conditions: 'Tj ≥ 125 °C, 1000 h',
      lots: 3,
      samplePerLot: 77,
      acceptNumber: 0,
      preconditioned: false,
      source: 'JESD47 qualification table, HTOL',
      basis: 'memory',
    },
    {
      key: 'htsl',
      name: 'High-temperature storage life (HTSL)',
      planKind: 'htsl',
      method: 'JESD22-A103',
      conditions: '150 °C (condition B), 1000 h',
      lots: 3,
      samplePerLot: 25,
      acceptNumber: 0,
      preconditioned: false,
      source: 'JESD47 qualification table, HTSL',
      basis: 'memory',
    },
    {
      key: 'tc',
      name: 'Temperature cycling (TC)',
      planKind: 'tc',
      method: 'JESD22-A104',
      conditions: 'Condition B (−55/+125 °C), 700 cycles',
      lots: 3,
      samplePerLot: 25,
      acceptNumber: 0,
      preconditioned: true,
      source: 'JESD47 qualification table, TC',
      basis: 'memory',
    },
    {
      key: 'thb',
      name: 'Temperature-humidity-bias (THB)',
      planKind: 'thb',
      method: 'JESD22-A101',
      conditions: '85 °C, 85 % RH, biased, 1000 h',
      lots: 3,
      samplePerLot: 25,
      acceptNumber: 0,
      preconditioned: true,
      source: 'JESD47 qualification table, THB',
      basis: 'memory',
    },
    {
      key: 'ac',
      name: 'Autoclave (AC)',
      planKind: 'ac',
      method: 'JESD22-A102',
      conditions: '121 °C, 100 % RH, 96 h',
      lots: 3,
      samplePerLot: 25,
      acceptNumber: 0,
      preconditioned: true,
      source: 'JESD47 qualification table, AC',
      basis: 'memory',
    },
    {
      key: 'esd-hbm',
      name: 'ESD, human body model',
      planKind: null,
      method: 'ANSI/ESDA/JEDEC JS-001',
      conditions: 'Classification',
      lots: 1,
      samplePerLot: 3,
      acceptNumber: 0,
      preconditioned: false,
      source: 'JESD47 qualification table, ESD',
      basis: 'memory',
    },
  ],
};

/**
 * MIL-PRF-19500 group tests. The group C life numbers are published (MIL-PRF-19500/453F §4.4.3.1:
 * 1000 h, n 45, c 0; shared/REFERENCE.md); the group E stresses and samples are recalled.
 */
const MIL_PRF_19500: QualTemplate = {
  key: 'mil-prf-19500',
  name: 'MIL-PRF-19500 group tests',
  standard: 'MIL-PRF-19500 and its slash sheet, groups B, C and E',
  scope: 'Military-grade discrete semiconductors',
  sequence: 'Group A electrical on every part first; groups B, C and E on parts that passed group A, each with end-point electrical test.',
  sequenceBasis: 'memory',
  groups: [
    {
      key: 'c-life',
      name: 'Group C steady-state operating life',
      planKind: 'hotl',
      method: 'MIL-STD-750 method 1026',
      conditions: 'VCB 10 V, Tj ≥ 150 °C, PD ≥ 75 % of rated, 1000 h',
      lots: 1,
      samplePerLot: 45,
      acceptNumber: 0,
      preconditioned: false,
      source: 'MIL-PRF-19500/453F §4.4.3.1 (group C life)',
      basis: 'published',
    },
    {
      key: 'e-htrb',
      name: 'Group E high-temperature reverse bias',
      planKind: 'htrb',
      method: 'MIL-STD-750 method 1039',
      conditions: '80 % of rated VCB at 150 °C, 1000 h',
      lots: 1,
      samplePerLot: 45,
      acceptNumber: 0,
      preconditioned: false,
      source: 'MIL-PRF-19500 Table E-IX, group E subgroup 2',
      basis: 'memory',
    },
    {
      key: 'e-tc',
      name: 'Group E temperature cycling',
      planKind: 'tc',
      method: 'MIL-STD-750 method 1051',
      conditions: '500 cycles, −55 to +175 °C or the slash sheet’s range',
      lots: 1,
      samplePerLot: 45,
      acceptNumber: 0,
      preconditioned: false,
      source: 'MIL-PRF-19500 Table E-IX, group E subgroup 1',
      basis: 'memory',
    },
    {
      key: 'e-iol',
      name: 'Group E intermittent operating life',
      planKind: 'iol',
      method: 'MIL-STD-750 method 1037',
      conditions: 'ΔTj ≥ 100 °C, 6000 cycles',
      lots: 1,
      samplePerLot: 45,
      acceptNumber: 0,
      preconditioned: false,
      source: 'MIL-PRF-19500 Table E-IX, group E subgroup 3',
      basis: 'memory',
    },
    {
      key: 'b-sd',
      name: 'Group B solderability',
      planKind: null,
      method: 'MIL-STD-750 method 2026',
      conditions: 'LTPD 15',
      lots: 1,
      samplePerLot: 15,
      acceptNumber: 0,
      preconditioned: false,
      source: 'MIL-PRF-19500 Table E-VIa, group B subgroup 1',
      basis: 'memory',
    },
    {
      key: 'e-dpa',
      name: 'Destructive physical analysis',
      planKind: null,
      method: 'MIL-STD-750 method 2102',
      conditions: 'Sectioning and internal visual',
      lots: 1,
      samplePerLot: 3,
      acceptNumber: 0,
      preconditioned: false,
      source: 'MIL-PRF-19500 group E, DPA',
      basis: 'memory',
    },
  ],
};

export const QUAL_TEMPLATES: Record<QualTemplateKey, QualTemplate> = {
  'aec-q101': AEC_Q101,
  jesd47: JESD47,
  'mil-prf-19500': MIL_PRF_19500,
};

/** Groups in the order the matrix shows them: groups preconditioned first (the standard's order), then the rest, each keeping the table's order. */
export function groupOrder(t: QualTemplate): QualGroup[] {
  return [...t.groups.filter((g) => g.preconditioned), ...t.groups.filter((g) => !g.preconditioned)];
}

export interface PlannedCell {
  groupKey: string;
  lotId: string;
  position: number;
  planKind: QualPlanKind | null;
  plannedSample: number;
  acceptNumber: number;
}

/**
 * The matrix a template asks for with the chosen lots: a cell per group and lot, for the first
 * `group.lots` lots (in the order chosen); `shortLots` names the groups that want more lots than chosen.
 */
export function planMatrix(
  t: QualTemplate,
  lotIds: readonly string[],
): { cells: PlannedCell[]; shortLots: Array<{ groupKey: string; wanted: number; chosen: number }> } {
  const cells: PlannedCell[] = [];
  const shortLots: Array<{ groupKey: string; wanted: number; chosen: number }> = [];
  groupOrder(t).forEach((g, gi) => {
    const used = lotIds.slice(0, g.lots);
    if (used.length < g.lots) shortLots.push({ groupKey: g.key, wanted: g.lots, chosen: used.length });
    used.forEach((lotId, li) =>
      cells.push({
        groupKey: g.key,
        lotId,
        position: gi * 100 + li,
        planKind: g.planKind,
        plannedSample: g.samplePerLot,
        acceptNumber: g.acceptNumber,
      }),
    );
  });
  return { cells, shortLots };
}

// ---------------------------------------------------------------------------------------------
// Cell state
// ---------------------------------------------------------------------------------------------

/** States after which nothing more is to be done for the cell. */
export const CELL_DONE_STATES: readonly CellState[] = ['passed', 'waived'];

export interface CellFacts {
  waived: boolean;
  planKind: string | null;
  external: { result: 'pass' | 'fail' } | null;
  /** States of the runs of the cell's kind on its lot (aborted ones included; they do not count). */
  runStates: readonly string[];
  /** The lot verdict's judgement of the plans of this kind on this lot (worst of them); null when none. */
  verdict: LotVerdict | null;
  /** Devices judged and failures counted by that verdict, against the cell's own plan (sample, accept number). */
  judged?: number | null;
  failures?: number | null;
  plannedSample?: number;
  acceptNumber?: number;
}

/**
 * Why a passed lot verdict does not yet satisfy the cell: the plan the lot was judged on may ask
 * for fewer devices or accept more failures than the cell (the template's sample). The cell then
 * waits for the engineer (more devices, a waiver, or a changed cell sample) — never a verdict of
 * its own.
 */
export function cellShortfall(f: CellFacts): string | null {
  if (f.judged != null && f.plannedSample !== undefined && f.judged < f.plannedSample)
    return `The verdict judged ${f.judged} devices; this cell plans ${f.plannedSample}.`;
  if (f.failures != null && f.acceptNumber !== undefined && f.failures > f.acceptNumber)
    return `The verdict counted ${f.failures} failures; this cell accepts ${f.acceptNumber}.`;
  return null;
}

const ON_RIG: ReadonlySet<string> = new Set(ON_RIG_STATES);

/**
 * A cell's state. The verdict itself is the lot verdict's (shared/verdict/judge.ts); this only
 * says where the cell stands: a waiver stands over everything; a cell with no run of its kind
 * stands on a recorded outside result, if any; a failed lot verdict is final even
 * while runs go on (failures beyond the accept number cannot be undone by more hours); a pass
 * counts only when every run of the kind has finished and the verdict's sample meets the cell's
 * (cellShortfall).
 */
export function cellState(f: CellFacts): CellState {
  if (f.waived) return 'waived';
  const external: CellState | null = f.external ? (f.external.result === 'pass' ? 'passed' : 'failed') : null;
  if (f.planKind === null) return external ?? 'not-started';
  const live = f.runStates.filter((s) => s !== 'aborted');
  // A run-kind group done outside the lab (no run here) stands on its recorded result.
  if (live.length === 0) return external ?? 'not-started';
  if (f.verdict === 'failed') return 'failed';
  if (live.some((s) => ON_RIG.has(s))) return 'under-stress';
  if (live.some((s) => s === 'booked')) return 'booked';
  if (f.verdict === 'passed' && cellShortfall(f) === null) return 'passed';
  return 'awaiting-verdict';
}

/** Complete when every cell passed or was waived and no group is short of lots; failed when any cell failed. */
export function qualificationStatus(states: readonly CellState[], shortLotGroups: number): QualificationStatus {
  if (states.some((s) => s === 'failed')) return 'failed';
  if (shortLotGroups === 0 && states.length > 0 && states.every((s) => CELL_DONE_STATES.includes(s))) return 'complete';
  return 'in-progress';
}
