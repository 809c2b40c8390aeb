/**
 * Small deterministic random numbers: the simulator, the demo seed, the bench publishers and the
 * tests all draw from seeded generators (never Math.random), so a seed reproduces a run exactly.
 */

/** mulberry32 (public domain): a 32-bit seed → uniform numbers in [0, 1); same seed, same sequence. */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
