/**
 * A reading's test conditions against the part's data-sheet ratings. A tester cannot measure hFE
 * at a collector current above the part's rated IC max, nor ICBO at a VCB above its rated BVCBO
 * (common practice: conditions inside the absolute maximum ratings); such a value almost always
 * means the file's unit is wrong (10 "A" that were 10 mA), so the row is refused with the numbers.
 */

export interface RatingsForReadings {
  partNumber: string;
  icMaxA: number;
  bvcboV: number;
}

export interface ReadingConditions {
  hfeIcA: number | null;
  icboVcbV: number | null;
}

const amps = (a: number) => (a >= 1 ? `${+a.toPrecision(4)} A` : `${+(a * 1e3).toPrecision(4)} mA`);
const volts = (v: number) => `${+v.toPrecision(4)} V`;

/** The row's problems against the ratings (empty when plausible). */
export function ratingProblems(r: ReadingConditions, d: RatingsForReadings): string[] {
  const out: string[] = [];
  if (r.hfeIcA !== null && r.hfeIcA > d.icMaxA) {
    out.push(
      `The hFE test current ${amps(r.hfeIcA)} is above the rated IC max of ${d.partNumber} (${amps(d.icMaxA)}); check the unit in the header.`,
    );
  }
  if (r.icboVcbV !== null && r.icboVcbV > d.bvcboV) {
    out.push(
      `The ICBO test voltage ${volts(r.icboVcbV)} is above the rated BVCBO of ${d.partNumber} (${volts(d.bvcboV)}); check the unit in the header.`,
    );
  }
  return out;
}
