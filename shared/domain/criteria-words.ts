/**
 * The failure criteria of a plan in words — declared once for the plan screen, the lot report, the
 * certificate and the CSV, so none of them can state a different ICBO rule than the one judged
 * (shared/stats deviceDrift: |ΔICBO| ≤ max((multiple − 1) × initial, floor)).
 */
import { sigFigures, withSiPrefix } from './format';

export interface CriteriaNumbers {
  hfeChangePct: number;
  leakageMultiple: number;
  leakageFloorA: number;
  vcesatShiftV: number;
}

/** hFE: "within ± 15 % of time zero". */
export const hfeRuleWords = (c: Pick<CriteriaNumbers, 'hfeChangePct'>) => `within ± ${sigFigures(c.hfeChangePct)} % of time zero`;

/**
 * ICBO: "≤ 2× initial, or a rise of up to 200 nA (whichever allows more)" — the reading may reach
 * max(multiple × initial, initial + floor).
 */
export const icboRuleWords = (c: Pick<CriteriaNumbers, 'leakageMultiple' | 'leakageFloorA'>) =>
  `≤ ${sigFigures(c.leakageMultiple)}× initial, or a rise of up to ${withSiPrefix(c.leakageFloorA, 'A')} (whichever allows more)`;

/** VCE(sat): "shift ≤ 50 mV". */
export const vcesatRuleWords = (c: Pick<CriteriaNumbers, 'vcesatShiftV'>) => `shift ≤ ${sigFigures(c.vcesatShiftV * 1000)} mV`;

/** All three on one line, for reports. */
export const criteriaWords = (c: CriteriaNumbers) => `hFE ${hfeRuleWords(c)}; ICBO ${icboRuleWords(c)}; VCE(sat) ${vcesatRuleWords(c)}`;
