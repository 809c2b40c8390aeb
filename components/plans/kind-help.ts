import type { PlanKind } from '@/shared/schemas/plans';

// Own module: the plan page reads it without pulling the form's help (help.ts) into the shared chunk.
/** What each stress is for, in the lab's words. */
export const KIND_HELP: Record<PlanKind, string> = {
  htrb:
    'High-temperature reverse bias: the collector-base junction is held off at a high reverse voltage (usually 80 % of BVCBO) in a hot ' +
    'oven, with no current flowing. It finds surface and passivation weaknesses — leakage that grows, gain that drops — that ions ' +
    'moving under the field cause. JESD22-A108.',
  hotl:
    'Powered operating life: the transistor conducts and dissipates power, so its own heat brings the junction near its rating. It ages ' +
    'the die attach, bond wires and metal under real current. MIL-PRF-19500 group C life.',
  iol:
    'Intermittent operating life: power switched on and off in equal periods so the junction swings by 100 °C or more each cycle. It ' +
    'fatigues the die attach and bond wires by repeated expansion. MIL-STD-750 method 1037.',
  thb:
    'Temperature-humidity-bias: 85 °C and 85 % RH with the junction reverse biased. Moisture and the field together drive corrosion and ' +
    'ionic leakage through the package. JESD22-A101.',
  tc:
    'Temperature cycling: unbiased devices in a chamber whose air swings between two extremes (−55/+125 °C, condition B) with a dwell ' +
    'at each. The package, solder and die attach fatigue as they expand and shrink. Counted in cycles; read points pause the chamber ' +
    'and the devices come out to be measured. JESD22-A104.',
  htsl:
    'High-temperature storage life: an unbiased bake (150 °C for 1000 h is usual). It ages bond intermetallics and the die ' +
    'surface without any field. JESD22-A103.',
  ac:
    'Autoclave (121 °C, 100 % RH, about 2 atm, JESD22-A102) or unbiased HAST (JESD22-A118): steam under pressure drives moisture ' +
    'into the package with no bias. A package-integrity test: pass/fail, no failure rate. The vessel is a pressure vessel.',
};
