/**
 * Moist air in a humidity chamber: saturation vapour pressure, dew point and relative humidity by the
 * Magnus form with the coefficients of Alduchov & Eskridge, "Improved Magnus form approximation of
 * saturation vapor pressure", J. Appl. Meteor. 35 (1996) 601–609 (over water: 6.1094 hPa, 17.625,
 * 243.04 °C; stated error below 0.4 % from −40 to +50 °C). Checked in tests against the IAPWS-IF97
 * saturation-pressure equation. Pure; °C and hPa.
 */

/** Magnus coefficients over liquid water [pub: Alduchov & Eskridge 1996]. */
export const MAGNUS = { cHpa: 6.1094, a: 17.625, bC: 243.04 } as const;

/** Saturation vapour pressure over water at tC, hPa. */
export function saturationVapourPressureHpa(tC: number): number {
  return MAGNUS.cHpa * Math.exp((MAGNUS.a * tC) / (MAGNUS.bC + tC));
}

/** Partial pressure of water vapour at tC and rhPct, hPa. */
export function vapourPressureHpa(tC: number, rhPct: number): number {
  return (rhPct / 100) * saturationVapourPressureHpa(tC);
}

/** The temperature at which this vapour pressure saturates (the dew point), °C. */
export function dewPointFromVapourC(eHpa: number): number {
  const g = Math.log(eHpa / MAGNUS.cHpa);
  return (MAGNUS.bC * g) / (MAGNUS.a - g);
}

/** Dew point of air at tC and rhPct (rhPct > 0), °C. */
export function dewPointC(tC: number, rhPct: number): number {
  const g = Math.log(rhPct / 100) + (MAGNUS.a * tC) / (MAGNUS.bC + tC);
  return (MAGNUS.bC * g) / (MAGNUS.a - g);
}

/** Relative humidity of air holding eHpa of vapour at tC, % (above 100: the air is supersaturated, water condenses). */
export function relativeHumidityPct(tC: number, eHpa: number): number {
  return (100 * eHpa) / saturationVapourPressureHpa(tC);
}
