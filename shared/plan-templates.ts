/**
 * Plan templates: the stress conditions of the published methods (reference methods §1), turned
 * into a complete plan body for a chosen device type. Each template names its sources with the
 * same tags the reference uses: [pub: …] published, [practice] common practice, [memory] recalled
 * and not checked against the text, [Emberlot] a choice of ours where the source leaves room.
 *
 * Templates are a starting point: the engineer reviews the numbers, and the plan check judges the
 * result against the device's ratings like any other plan.
 */
import { grouped, sigFigures } from './domain/format';
import { sourceText } from './domain/source-words';
import {
  DEFAULT_BIAS_TOLERANCE_PCT,
  METHOD_CHAMBER_BAND_K,
  bandText,
  DEFAULT_DURATION_H,
  DEFAULT_EA_EV,
  DEFAULT_READ_POINTS_H,
  DEFAULT_USE_C,
  REVERSE_BIAS_FRACTION,
  ROOM_AMBIENT_C,
} from './domain/standards';
import {
  AC_CONDITIONS,
  AC_DEFAULT_READ_POINTS_H,
  HTSL_DEFAULT_C,
  HTSL_DEFAULT_H,
  TC_CONDITIONS,
  TC_DEFAULT_CYCLES,
  TC_DEFAULT_DWELL_MIN,
  TC_DEFAULT_RAMP_K_PER_MIN,
  TC_DEFAULT_READ_POINTS_CYCLES,
} from './domain/chamber-methods';
import { tcCyclesToH, tcPeriodMin } from './chamber/profile';
import { estimateBvceo } from './physics';
import { JUNCTION_WARN_MARGIN_K } from './safety/plan-rules/types';
import type { DeviceTypeInput } from './schemas/devices';
import { criteriaSchema, PLAN_KIND_LABEL, type PlanInput, type PlanTemplate, type TemplateRule } from './schemas/plans';

export const SOURCES = {
  htrb: '[pub: JESD22-A108; AEC-Q101 test table]',
  hotl: '[pub: MIL-PRF-19500 group C life]',
  iol: '[pub: MIL-STD-750 method 1037 as used by AEC-Q101]',
  thb: '[pub: JESD22-A101]',
  tc: '[pub: JESD22-A104; AEC-Q101 test table — TC 1000 cycles] [memory: condition letters and tolerances — confirm]',
  htsl: '[pub: JESD22-A103D Table 1; AEC-Q101 test table — HTSL 1000 h]',
  ac: '[memory: JESD22-A102 121 °C / 100 % RH / 205 kPa, 96 h; JESD22-A118 unbiased HAST — confirm]',
  readPoints: '[practice]',
  chamberBand: '[memory: JESD22-A108 / MIL-STD-750 — stress temperature a minimum, +5/−0 K; confirm]',
  criteria: '[pub: MIL-PRF-19500 slash-sheet delta limits]',
  ea: '[practice]',
  aecSampleMemory: '[memory: AEC-Q101 test table — 3 lots × 77, accept 0; confirm against the current revision]',
  ours: '[Emberlot choice, not from a standard]',
} as const;

/** Read points for every template (hours). */
export const TEMPLATE_READ_POINTS_H = DEFAULT_READ_POINTS_H;
export const TEMPLATE_DURATION_H = DEFAULT_DURATION_H;
export { REVERSE_BIAS_FRACTION };
/** Powered life: aim the junction this far below Tj max (spread of θja and gain across a lot) — the plan check's warning margin. */
export const POWERED_TJ_MARGIN_C = JUNCTION_WARN_MARGIN_K;
/** Powered life and cycling run from room ambient; the parts heat themselves. */
export const POWERED_AMBIENT_C = ROOM_AMBIENT_C;
/** Preferred collector-emitter voltage for powered stresses: VCB 10–30 V in the source. */
export const POWERED_VCE_V = 20;
export const POWERED_VCE_MIN_V = 10;
/** Collector current is kept below this fraction of IC max. */
export const POWERED_IC_FRACTION = 0.8;
export const IOL_DELTA_TJ_C = 100;
export const IOL_CYCLES = 15000;
export const IOL_ON_MIN = 2;
export const IOL_OFF_MIN = 2;
export const HTRB_SAMPLE = { n: 77, c: 0 };
export const HOTL_SAMPLE = { n: 45, c: 0 };
export const IOL_SAMPLE = { n: 77, c: 0 };
export const THB_SAMPLE = { n: 77, c: 0 };
/** TC, HTSL and autoclave per lot [memory: AEC-Q101 test table — 77 per lot, accept 0; confirm]. */
export const CHAMBER_SAMPLE = { n: 77, c: 0 };
/** The TC template's condition [pub: AEC-Q101 uses −55/+150 °C or the part's range; condition B −55/+125 °C is the common one — memory]. */
export const TC_TEMPLATE_CONDITION = 'B';
export const THB_CHAMBER_C = 85;
export const THB_RH_PCT = 85;
export { DEFAULT_EA_EV, DEFAULT_USE_C };

type Device = DeviceTypeInput & { id: string };

const sig = sigFigures;
/** Rounds down to `step` (never above the value it came from). */
function roundDown(x: number, step: number): number {
  let r = Math.round(Math.floor(x / step + 1e-9) * step * 1e6) / 1e6;
  if (r > x) r = Math.round((r - step) * 1e6) / 1e6;
  return r;
}
/** Three significant figures, rounded down. */
function sigDown(x: number): number {
  if (x <= 0) return 0;
  const step = 10 ** (Math.floor(Math.log10(x)) - 2);
  return roundDown(x, step);
}
const amps = (a: number) => (a < 1 ? `${sig(a * 1000)} mA` : `${sig(a)} A`);

/** Reverse bias at `fraction` of BVCBO, to 0.1 V, never above the exact fraction. */
export function reverseBiasVoltage(bvcboV: number, fraction = REVERSE_BIAS_FRACTION): number {
  return roundDown(bvcboV * fraction, 0.1);
}

function bvceoOf(d: Device): { v: number; estimated: boolean } {
  if (d.bvceoV !== null) return { v: d.bvceoV, estimated: false };
  return { v: estimateBvceo({ bvcbo: d.bvcboV, beta: d.betaRef, n: d.breakdownN }), estimated: true };
}

/**
 * Operating point of a powered stress with the collector current regulated (no gain–temperature
 * loop): target dissipation, VCE within the derated BVCEO, IC below its rating.
 */
export function poweredBias(d: Device, targetPowerW: number): { vceV: number; icA: number; powerW: number; rules: TemplateRule[] } {
  const bvceo = bvceoOf(d);
  const vceCap = roundDown(bvceo.v * REVERSE_BIAS_FRACTION, 0.1);
  const vceV = Math.min(POWERED_VCE_V, vceCap);
  let icA = sigDown(targetPowerW / vceV);
  const icCap = sigDown(d.icMaxA * POWERED_IC_FRACTION);
  const capped = icA > icCap;
  if (capped) icA = icCap;
  const powerW = vceV * icA;
  const rules: TemplateRule[] = [
    {
      label: 'VCE',
      value:
        `${sig(vceV)} V (VCB ≈ ${sig(vceV - 0.7)} V)` +
        (vceV < POWERED_VCE_V ? `, held to 80 % of ${bvceo.estimated ? 'the estimated' : 'rated'} BVCEO ${sig(bvceo.v)} V` : '') +
        (vceV < POWERED_VCE_MIN_V ? ' — below the 10 V the source asks for; this part cannot take more' : ''),
      source: `${SOURCES.hotl} VCB 10–30 V`,
    },
    {
      label: 'IC (regulated)',
      value: `${amps(icA)} = P / VCE${capped ? `, held to ${POWERED_IC_FRACTION * 100} % of IC max ${amps(d.icMaxA)}` : ''}`,
      source: `${SOURCES.ours} a regulated collector current has no gain–temperature runaway loop`,
    },
  ];
  return { vceV, icA, powerW, rules };
}

function basePlan(d: Device) {
  return {
    deviceTypeId: d.id,
    readPointsH: [...TEMPLATE_READ_POINTS_H],
    durationH: TEMPLATE_DURATION_H,
    criteria: criteriaSchema.parse({}),
    eaEv: DEFAULT_EA_EV,
    useC: DEFAULT_USE_C,
    breakdownDerating: REVERSE_BIAS_FRACTION,
    thermalCycle: null,
    acCondition: null,
  };
}

const commonRules: TemplateRule[] = [
  { label: 'Read points', value: TEMPLATE_READ_POINTS_H.join(' / ') + ' h', source: SOURCES.readPoints },
  { label: 'Failure criteria', value: 'hFE ±15 %, ICBO ≤ 2× initial or 200 nA, VCE(sat) shift ≤ 50 mV', source: SOURCES.criteria },
  {
    label: 'Activation energy',
    value: `${DEFAULT_EA_EV} eV, use temperature ${DEFAULT_USE_C} °C`,
    source: `${SOURCES.ea} (use temperature: ${SOURCES.ours})`,
  },
];

function notesFor(title: string, sources: string[]): string {
  return `From the template "${title}". Sources: ${sources.map(sourceText).join('; ')}. Review every number against the device's data sheet before booking.`;
}

function htrb(d?: Device): PlanTemplate {
  const sources = [SOURCES.htrb, SOURCES.chamberBand, SOURCES.readPoints, SOURCES.criteria];
  const summary =
    'High-temperature reverse bias: the collector-base junction held off at 80 % of its rated breakdown, ' +
    'hot, with no current flowing. It finds surface and passivation weaknesses (leakage growth, gain loss) ' +
    'driven by ions moving under the field.';
  if (!d) {
    return {
      key: 'htrb',
      kind: 'htrb',
      title: 'HTRB at Tj max, 80 % VCBO, 1000 h (JESD22-A108)',
      summary,
      sources,
      plan: null,
      rules: [
        { label: 'VCB', value: '80 % of the rated BVCBO', source: SOURCES.htrb },
        {
          label: 'Chamber',
          value: `Tj max as the minimum, band ${bandText(METHOD_CHAMBER_BAND_K.htrb)}`,
          source: `${SOURCES.htrb} Tj at rated max; band ${SOURCES.chamberBand}`,
        },
        { label: 'Sample', value: `${HTRB_SAMPLE.n} per lot, accept ${HTRB_SAMPLE.c} (3 lots for a qualification)`, source: SOURCES.htrb },
        ...commonRules,
      ],
    };
  }
  const chamberC = d.tjMaxC;
  const band = METHOD_CHAMBER_BAND_K.htrb;
  const vcbV = reverseBiasVoltage(d.bvcboV);
  const title = `HTRB ${sig(chamberC, 4)} °C (Tj max), 80 % VCBO, 1000 h (JESD22-A108)`;
  const plan: PlanInput = {
    ...basePlan(d),
    name: title,
    kind: 'htrb',
    chamberC,
    chamberBand: { ...band },
    humidityPct: null,
    bias: { vcbV, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: DEFAULT_BIAS_TOLERANCE_PCT },
    sampleSize: HTRB_SAMPLE.n,
    acceptNumber: HTRB_SAMPLE.c,
    cycle: null,
    notes: notesFor(title, sources),
  };
  return {
    key: 'htrb',
    kind: 'htrb',
    title,
    summary,
    sources,
    plan,
    rules: [
      { label: 'VCB', value: `${sig(vcbV)} V = 80 % of BVCBO ${sig(d.bvcboV)} V`, source: SOURCES.htrb },
      {
        label: 'Chamber',
        value: `${sig(chamberC, 4)} °C = Tj max as the minimum, band ${bandText(band)} (${sig(chamberC, 4)}–${sig(chamberC + band.aboveK, 4)} °C)`,
        source: `${SOURCES.htrb} Tj at rated max; band ${SOURCES.chamberBand}`,
      },
      { label: 'Duration', value: '1000 h', source: SOURCES.htrb },
      { label: 'Sample', value: `${HTRB_SAMPLE.n} per lot, accept ${HTRB_SAMPLE.c} (3 lots for a qualification)`, source: SOURCES.htrb },
      ...commonRules,
    ],
  };
}

function hotl(d?: Device): PlanTemplate {
  const sources = [SOURCES.hotl, SOURCES.readPoints, SOURCES.criteria];
  const summary =
    'Powered operating life: the transistor conducts and dissipates power, so its own heat takes the junction ' +
    'to near its rating. It ages the die attach, bond wires and metallisation under real current, as in use.';
  if (!d) {
    return {
      key: 'hotl',
      kind: 'hotl',
      title: 'Powered operating life near Tj max, 1000 h (MIL-PRF-19500 group C)',
      summary,
      sources,
      plan: null,
      rules: [
        {
          label: 'Junction',
          value: `Tj max less ${POWERED_TJ_MARGIN_C} °C, by self-heating from a ${POWERED_AMBIENT_C} °C ambient`,
          source: `${SOURCES.hotl} Tj ≥ rated; margin ${SOURCES.ours}`,
        },
        { label: 'VCE', value: `${POWERED_VCE_V} V, or 80 % of BVCEO if lower`, source: `${SOURCES.hotl} VCB 10–30 V` },
        { label: 'Sample', value: `${HOTL_SAMPLE.n}, accept ${HOTL_SAMPLE.c}`, source: SOURCES.hotl },
        ...commonRules,
      ],
    };
  }
  const chamberC = POWERED_AMBIENT_C;
  const freeAirRatingW = (d.tjMaxC - chamberC) / d.thetaJaCPerW;
  const targetW = (d.tjMaxC - POWERED_TJ_MARGIN_C - chamberC) / d.thetaJaCPerW;
  const op = poweredBias(d, targetW);
  const tj = chamberC + d.thetaJaCPerW * op.powerW;
  const title = `Powered operating life, Tj ≈ ${Math.round(tj)} °C, 1000 h (MIL-PRF-19500 group C)`;
  const plan: PlanInput = {
    ...basePlan(d),
    name: title,
    kind: 'hotl',
    chamberC,
    chamberBand: { ...METHOD_CHAMBER_BAND_K.hotl },
    humidityPct: null,
    bias: { vcbV: null, vebV: null, vceV: op.vceV, ibA: null, icA: op.icA, tolerancePct: DEFAULT_BIAS_TOLERANCE_PCT },
    sampleSize: HOTL_SAMPLE.n,
    acceptNumber: HOTL_SAMPLE.c,
    cycle: null,
    notes: notesFor(title, sources),
  };
  return {
    key: 'hotl',
    kind: 'hotl',
    title,
    summary,
    sources,
    plan,
    rules: [
      {
        label: 'Dissipation',
        value:
          `${sig(op.powerW)} W, ${sig((op.powerW / freeAirRatingW) * 100)} % of the free-air rating ` +
          `(Tj max − ${chamberC} °C)/θja = ${sig(freeAirRatingW)} W`,
        source: `${SOURCES.hotl} dissipation ≥ 75 % of rating`,
      },
      {
        label: 'Junction',
        value: `≈ ${sig(tj, 4)} °C = ${chamberC} °C + θja ${sig(d.thetaJaCPerW)} °C/W × P (aim: Tj max − ${POWERED_TJ_MARGIN_C} °C)`,
        source: `${SOURCES.hotl} Tj ≥ rated; margin ${SOURCES.ours}`,
      },
      ...op.rules,
      { label: 'Sample', value: `${HOTL_SAMPLE.n}, accept ${HOTL_SAMPLE.c} (LTPD 5 % at 90 % confidence)`, source: SOURCES.hotl },
      ...commonRules,
    ],
  };
}

function iol(d?: Device): PlanTemplate {
  const sources = [SOURCES.iol, SOURCES.aecSampleMemory, SOURCES.readPoints, SOURCES.criteria];
  const summary =
    'Intermittent operating life: power switched on and off in equal periods so the junction swings by 100 °C ' +
    'or more every cycle. It fatigues the die attach and bond wires through repeated expansion.';
  const cycleH = (IOL_ON_MIN + IOL_OFF_MIN) / 60;
  const baseRules: TemplateRule[] = [
    {
      label: 'Cycle',
      value: `${IOL_ON_MIN} min on, ${IOL_OFF_MIN} min off (on-time = off-time)`,
      source: `${SOURCES.iol}; ${IOL_ON_MIN} min ${SOURCES.ours}`,
    },
    { label: 'Junction swing', value: `ΔTj ${IOL_DELTA_TJ_C} °C for ${grouped(IOL_CYCLES)} cycles`, source: SOURCES.iol },
    {
      label: 'Duration',
      value: `${grouped(IOL_CYCLES)} cycles × ${IOL_ON_MIN + IOL_OFF_MIN} min = ${sig(IOL_CYCLES * cycleH)} h`,
      source: SOURCES.ours,
    },
    { label: 'Sample', value: `${IOL_SAMPLE.n} per lot, accept ${IOL_SAMPLE.c}`, source: SOURCES.aecSampleMemory },
  ];
  if (!d) {
    return {
      key: 'iol',
      kind: 'iol',
      title: 'Intermittent operating life, ΔTj 100 °C, 15,000 cycles (MIL-STD-750 M1037)',
      summary,
      sources,
      plan: null,
      rules: [
        ...baseRules,
        { label: 'Dissipation (on)', value: 'ΔTj / θja, collector current regulated', source: SOURCES.ours },
        ...commonRules,
      ],
    };
  }
  const chamberC = POWERED_AMBIENT_C;
  const targetW = IOL_DELTA_TJ_C / d.thetaJaCPerW;
  const op = poweredBias(d, targetW);
  const deltaTj = d.thetaJaCPerW * op.powerW;
  const title = 'Intermittent operating life, ΔTj 100 °C, 15,000 cycles (MIL-STD-750 M1037)';
  const plan: PlanInput = {
    ...basePlan(d),
    name: title,
    kind: 'iol',
    chamberC,
    chamberBand: { ...METHOD_CHAMBER_BAND_K.iol },
    humidityPct: null,
    bias: { vcbV: null, vebV: null, vceV: op.vceV, ibA: null, icA: op.icA, tolerancePct: DEFAULT_BIAS_TOLERANCE_PCT },
    durationH: IOL_CYCLES * cycleH,
    sampleSize: IOL_SAMPLE.n,
    acceptNumber: IOL_SAMPLE.c,
    cycle: { onMin: IOL_ON_MIN, offMin: IOL_OFF_MIN, deltaTjC: IOL_DELTA_TJ_C, cycles: IOL_CYCLES },
    notes: notesFor(title, sources),
  };
  return {
    key: 'iol',
    kind: 'iol',
    title,
    summary,
    sources,
    plan,
    rules: [
      ...baseRules,
      {
        label: 'Dissipation (on)',
        value: `${sig(op.powerW)} W, giving ΔTj ≈ ${sig(deltaTj)} °C over θja ${sig(d.thetaJaCPerW)} °C/W (steady state; a short on-time swings less)`,
        source: SOURCES.ours,
      },
      ...op.rules,
      ...commonRules,
    ],
  };
}

function thb(d?: Device): PlanTemplate {
  const sources = [SOURCES.thb, SOURCES.aecSampleMemory, SOURCES.readPoints, SOURCES.criteria];
  const summary =
    'Temperature-humidity-bias: 85 °C and 85 % relative humidity with the junction reverse biased. Moisture ' +
    'and the field together drive corrosion and ionic leakage through the package; bias is kept low in power ' +
    'so the part does not dry itself out.';
  const rhRule: TemplateRule = {
    label: 'Chamber',
    value: `${THB_CHAMBER_C} °C ${bandText(METHOD_CHAMBER_BAND_K.thb)} / ${THB_RH_PCT} % RH`,
    source: `${SOURCES.thb} [memory: 85 ± 2 °C — confirm]`,
  };
  if (!d) {
    return {
      key: 'thb',
      kind: 'thb',
      title: 'THB 85 °C / 85 % RH, 80 % VCBO, 1000 h (JESD22-A101)',
      summary,
      sources,
      plan: null,
      rules: [
        rhRule,
        { label: 'VCB', value: '80 % of the rated reverse voltage (BVCBO)', source: SOURCES.thb },
        { label: 'Sample', value: `${THB_SAMPLE.n} per lot, accept ${THB_SAMPLE.c}`, source: SOURCES.aecSampleMemory },
        ...commonRules,
      ],
    };
  }
  const vcbV = reverseBiasVoltage(d.bvcboV);
  const title = 'THB 85 °C / 85 % RH, 80 % VCBO, 1000 h (JESD22-A101)';
  const plan: PlanInput = {
    ...basePlan(d),
    name: title,
    kind: 'thb',
    chamberC: THB_CHAMBER_C,
    chamberBand: { ...METHOD_CHAMBER_BAND_K.thb },
    humidityPct: THB_RH_PCT,
    bias: { vcbV, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: DEFAULT_BIAS_TOLERANCE_PCT },
    sampleSize: THB_SAMPLE.n,
    acceptNumber: THB_SAMPLE.c,
    cycle: null,
    notes: notesFor(title, sources),
  };
  return {
    key: 'thb',
    kind: 'thb',
    title,
    summary,
    sources,
    plan,
    rules: [
      rhRule,
      { label: 'VCB', value: `${sig(vcbV)} V = 80 % of BVCBO ${sig(d.bvcboV)} V`, source: SOURCES.thb },
      { label: 'Duration', value: '1000 h', source: SOURCES.thb },
      { label: 'Sample', value: `${THB_SAMPLE.n} per lot, accept ${THB_SAMPLE.c}`, source: SOURCES.aecSampleMemory },
      ...commonRules,
    ],
  };
}

/** The unbiased chamber stresses share: no bias, the sample of the AEC table, the method's band. */
function chamberPlan(d: Device, title: string, sources: string[]) {
  return {
    ...basePlan(d),
    name: title,
    humidityPct: null,
    bias: { vcbV: null, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: DEFAULT_BIAS_TOLERANCE_PCT },
    sampleSize: CHAMBER_SAMPLE.n,
    acceptNumber: CHAMBER_SAMPLE.c,
    cycle: null,
    notes: notesFor(title, sources),
  };
}
const storageRule = (d?: Device): TemplateRule => ({
  label: 'Storage rating',
  value:
    d?.tstgMaxC != null
      ? `Tstg ${sig(d.tstgMinC ?? NaN)}…${sig(d.tstgMaxC)} °C (the plan check compares the chamber with it)`
      : 'The plan check compares the chamber with the part’s Tstg',
  source: SOURCES.ours,
});

function tc(d?: Device): PlanTemplate {
  const sources = [SOURCES.tc, SOURCES.aecSampleMemory, SOURCES.readPoints, SOURCES.criteria];
  const cond = TC_CONDITIONS.find((c) => c.code === TC_TEMPLATE_CONDITION)!;
  const profile = {
    lowC: cond.lowC,
    highC: cond.highC,
    dwellMin: TC_DEFAULT_DWELL_MIN,
    rampKPerMin: TC_DEFAULT_RAMP_K_PER_MIN,
    cycles: TC_DEFAULT_CYCLES,
  };
  const title = `TC ${cond.lowC}/+${cond.highC} °C (condition ${cond.code}), ${TC_DEFAULT_CYCLES} cycles (JESD22-A104)`;
  const summary =
    'Temperature cycling: unbiased parts in a chamber whose air swings between the two extremes, with a dwell at each. ' +
    'Solder, die attach and the package fatigue as they expand and shrink. Read points in cycles.';
  const rules: TemplateRule[] = [
    {
      label: 'Extremes',
      value: `${cond.lowC} °C / +${cond.highC} °C (condition ${cond.code}; the load must reach each)`,
      source: SOURCES.tc,
    },
    {
      label: 'Dwell and ramp',
      value: `${TC_DEFAULT_DWELL_MIN} min at each extreme, air ramp ${TC_DEFAULT_RAMP_K_PER_MIN} K/min (${sig(tcPeriodMin(profile))} min per cycle)`,
      source: SOURCES.readPoints,
    },
    { label: 'Cycles', value: `${TC_DEFAULT_CYCLES}, read points ${TC_DEFAULT_READ_POINTS_CYCLES.join(' / ')} cycles`, source: SOURCES.tc },
    { label: 'Sample', value: `${CHAMBER_SAMPLE.n} per lot, accept ${CHAMBER_SAMPLE.c}`, source: SOURCES.aecSampleMemory },
    storageRule(d),
  ];
  if (!d) return { key: 'tc', kind: 'tc', title, summary, sources, plan: null, rules };
  const plan: PlanInput = {
    ...chamberPlan(d, title, sources),
    kind: 'tc',
    chamberC: cond.highC,
    chamberBand: { ...METHOD_CHAMBER_BAND_K.tc },
    thermalCycle: profile,
    durationH: tcCyclesToH(profile, TC_DEFAULT_CYCLES),
    readPointsH: TC_DEFAULT_READ_POINTS_CYCLES.map((c) => tcCyclesToH(profile, c)),
  };
  return { key: 'tc', kind: 'tc', title, summary, sources, plan, rules };
}

function htsl(d?: Device): PlanTemplate {
  const sources = [SOURCES.htsl, SOURCES.aecSampleMemory, SOURCES.readPoints, SOURCES.criteria];
  const title = `HTSL ${HTSL_DEFAULT_C} °C, ${HTSL_DEFAULT_H} h (JESD22-A103)`;
  const summary = 'High-temperature storage life: an unbiased bake. It ages bond intermetallics and the die surface without any field.';
  const rules: TemplateRule[] = [
    { label: 'Chamber', value: `${HTSL_DEFAULT_C} °C ${bandText(METHOD_CHAMBER_BAND_K.htsl)}, no bias`, source: SOURCES.htsl },
    { label: 'Duration', value: `${HTSL_DEFAULT_H} h`, source: SOURCES.htsl },
    { label: 'Sample', value: `${CHAMBER_SAMPLE.n} per lot, accept ${CHAMBER_SAMPLE.c}`, source: SOURCES.aecSampleMemory },
    storageRule(d),
    ...commonRules,
  ];
  if (!d) return { key: 'htsl', kind: 'htsl', title, summary, sources, plan: null, rules };
  const plan: PlanInput = {
    ...chamberPlan(d, title, sources),
    kind: 'htsl',
    chamberC: HTSL_DEFAULT_C,
    chamberBand: { ...METHOD_CHAMBER_BAND_K.htsl },
    durationH: HTSL_DEFAULT_H,
  };
  return { key: 'htsl', kind: 'htsl', title, summary, sources, plan, rules };
}

function ac(d?: Device): PlanTemplate {
  const sources = [SOURCES.ac, SOURCES.aecSampleMemory, SOURCES.readPoints, SOURCES.criteria];
  const c = AC_CONDITIONS.autoclave;
  const title = `${c.label}, ${c.durationH} h (JESD22-A102)`;
  const summary =
    'Autoclave: saturated steam under pressure drives moisture into the package with no bias. A package-integrity check ' +
    '(pass/fail, no failure rate). The vessel is a pressure vessel: never opened under pressure.';
  const rules: TemplateRule[] = [
    {
      label: 'Vessel',
      value: `${c.chamberC} °C ${bandText(METHOD_CHAMBER_BAND_K.ac)}, ${c.humidityPct} % RH, ${c.pressureKPa} kPa absolute`,
      source: SOURCES.ac,
    },
    { label: 'Duration', value: `${c.durationH} h, read points ${AC_DEFAULT_READ_POINTS_H.join(' / ')} h`, source: SOURCES.ac },
    { label: 'Sample', value: `${CHAMBER_SAMPLE.n} per lot, accept ${CHAMBER_SAMPLE.c}`, source: SOURCES.aecSampleMemory },
    storageRule(d),
  ];
  if (!d) return { key: 'ac', kind: 'ac', title, summary, sources, plan: null, rules };
  const plan: PlanInput = {
    ...chamberPlan(d, title, sources),
    kind: 'ac',
    chamberC: c.chamberC,
    chamberBand: { ...METHOD_CHAMBER_BAND_K.ac },
    humidityPct: c.humidityPct,
    acCondition: c.code,
    durationH: c.durationH,
    readPointsH: [...AC_DEFAULT_READ_POINTS_H],
  };
  return { key: 'ac', kind: 'ac', title, summary, sources, plan, rules };
}

/** The templates, built for `device` when given (otherwise rules only, `plan: null`). */
export function buildPlanTemplates(device?: Device): PlanTemplate[] {
  return [htrb(device), hotl(device), iol(device), thb(device), tc(device), htsl(device), ac(device)];
}

export { PLAN_KIND_LABEL };
