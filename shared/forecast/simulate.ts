/**
 * Seeded draws for the forecast's simulation: standard normals (Box–Muller) and chi-square variates
 * (Wilson–Hilferty), both from shared/random.ts's mulberry32 so a seed reproduces a forecast.
 */
import { mulberry32 } from '../random';

export interface Draws {
  uniform: () => number;
  normal: () => number;
  /** χ²_k / k, the scale of a variance estimated on k degrees of freedom. */
  chiSquareOverDf: (k: number) => number;
}

export function seededDraws(seed: number): Draws {
  const u = mulberry32(seed);
  let spare: number | null = null;
  const normal = () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    // Box & Muller (1958): two uniforms → two independent standard normals.
    let a = u();
    while (a <= 0) a = u();
    const r = Math.sqrt(-2 * Math.log(a));
    const th = 2 * Math.PI * u();
    spare = r * Math.sin(th);
    return r * Math.cos(th);
  };
  /**
   * Wilson & Hilferty (1931, PNAS 17:684): (χ²_k/k)^(1/3) is close to normal with mean 1 − 2/(9k)
   * and variance 2/(9k); good to a few per cent in the tails from k ≈ 3.
   */
  const chiSquareOverDf = (k: number) => {
    if (!(k > 0)) return 1;
    const v = 2 / (9 * k);
    const c = 1 - v + normal() * Math.sqrt(v);
    return c > 0 ? c * c * c : 0;
  };
  return { uniform: u, normal, chiSquareOverDf };
}
