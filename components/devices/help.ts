import { BVCBO_HELP } from './help-bvcbo';

/**
 * Inline help for the device-type form, in the lab's own words. Each line says what the rating is,
 * where it sits on a data sheet, and why the plan check needs it.
 */
export const DEVICE_HELP = {
  partNumber: 'As printed on the traveller, e.g. HPD-2N140. Must be unique in the lab.',
  kind: 'Bipolar transistors get the full gain–temperature runaway check; MOSFETs and diodes get the breakdown and dissipation checks.',
  polarity: 'Voltages are entered as magnitudes for PNP and P-channel parts too.',
  bvcboV: BVCBO_HELP,
  bvceoV:
    'BVCEO: collector-emitter breakdown with the base open. Lower than BVCBO because the transistor amplifies its own avalanche ' +
    'current — often about half. Leave empty if the data sheet does not give it; Emberlot then estimates it from BVCBO and the gain.',
  bveboV:
    'BVEBO: emitter-base breakdown with the collector open, usually only 5–9 V. Driving this junction into avalanche permanently ' +
    'lowers the gain, so never reverse-bias it beyond this.',
  icMaxA: 'Maximum continuous collector current (A).',
  pMaxW: 'Total power dissipation rating (W) at the case temperature below — usually with the case held at 25 °C on an ideal heatsink.',
  pRatedAtC: 'Case temperature at which the power rating applies (25 °C on most data sheets).',
  tjMaxC: 'Maximum junction temperature (°C). HTRB runs near it; the plan check refuses plans that predict a junction above it.',
  thetaJcCPerW:
    'θjc: junction-to-case thermal resistance (°C/W) — how much hotter the die runs than the case per watt. Sets the power limit when the case is held.',
  thetaJaCPerW:
    'θja: junction-to-ambient thermal resistance (°C/W) in free air — always larger than θjc because it includes the case-to-air path. ' +
    'The plan check uses it for the junction temperature in a chamber and for thermal runaway.',
  betaRef: 'hFE: DC current gain at the reference collector current and temperature below (a typical value, not the minimum).',
  betaRefIcA: 'Collector current (A) at which the hFE figure was measured.',
  betaRefTC: 'Temperature (°C) of the hFE figure, usually 25 °C.',
  xtb:
    'XTB: how fast the gain rises with temperature, β(T) = β_ref · (T/T_ref)^XTB in kelvin. 1.5 is common for silicon BJTs. ' +
    'A higher XTB makes forced-base-current stresses more prone to thermal runaway.',
  icboRefA:
    'ICBO: collector-base leakage at 25 °C, in nA. It roughly doubles every 10 °C, so at 150 °C it can heat the junction on its own; ' +
    'leave empty to skip the leakage self-heating check.',
  icboHotA:
    'Hot-leakage point: the collector-base leakage the data sheet guarantees at a high temperature (µA), with that temperature and VCB. ' +
    'With it the plan check takes leakage between the two points by the two-point law instead of "doubles every 10 °C", and scales it ' +
    'up as √V to a higher plan VCB (an assumption). A high-voltage HTRB then stops looking like runaway when the part does not run away.',
  icboHotC: 'Temperature (°C) of the hot-leakage point, as the data sheet states it (often 125 or 150 °C).',
  icboHotVcbV: 'VCB (V) at which the hot leakage is stated.',
  sbKneeV:
    'Second breakdown: the collector-emitter voltage where the data sheet’s safe-operating-area line leaves the constant-power line. ' +
    'Above it the allowed current falls faster than power alone says; powered plans above the knee are checked against it. ' +
    'The default is a guess — read it off the SOA plot.',
  sbSlopeN:
    'Slope n of the second-breakdown line, I·V^n = constant (the constant-power line is n = 1); read it from two points of the SOA plot.',
  breakdownN: 'Exponent n in BVCEO ≈ BVCBO / β^(1/n), used only when BVCEO is empty (2–6; 3 is a fair guess for silicon).',
  description: 'A line that helps people tell parts apart: package, voltage class, use.',
} as const;

export type DeviceHelpKey = keyof typeof DEVICE_HELP;
