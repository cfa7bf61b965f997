/**
 * mulberry32: a small seeded 32-bit generator (public domain, common practice),
 * uniform in [0, 1). Enough for reproducible tolerance runs and seeded test data;
 * the mismatch Monte Carlo uses its own xoshiro128** for its longer streams.
 */
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
