/**
 * Seeded randomness so simulated runs, the demo history, tests and proofs repeat exactly: one
 * generator (mulberry32, a public-domain algorithm) for all of them.
 */

/** Uniform numbers in [0, 1). */
export type Rng = () => number;

/** Small, fast seeded generator (mulberry32). Seed with any 32-bit integer; default 1. */
export function seededRng(seed = 1): Rng {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviate (Box–Muller). */
export function gaussian(rng: Rng): number {
  const u = Math.max(rng(), Number.EPSILON);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng());
}

/** A source of standard normal deviates (Box–Muller) drawn from `rng`. */
export function normalSource(rng: Rng): () => number {
  return () => gaussian(rng);
}
