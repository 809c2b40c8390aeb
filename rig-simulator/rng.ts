/** Small deterministic random numbers, so a fleet seed reproduces a demo exactly. */
import { mulberry32 } from '../shared/random';

/** FNV-1a 32-bit hash of a string. */
export function hashString(s: string): number {
  let h = 0x811c9dc5;
  for (let k = 0; k < s.length; k++) {
    h ^= s.charCodeAt(k);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

/** mulberry32 (shared/random.ts): uniform in [0, 1). */
export const createRng = mulberry32;

/** Standard normal by Box–Muller. */
export function gaussian(rng: () => number): number {
  const u = Math.max(rng(), 1e-12);
  const v = rng();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}
