/**
 * How much of each proof to run. `npm test` runs a short pass of every proof (the same code, fewer
 * rounds); `npm run test:proof` (PROOF_LEVEL=full) runs the full figures that the README reports.
 * An explicit variable (e.g. PROOF_KILLS) always wins.
 */
export const PROOF_FULL = process.env.PROOF_LEVEL === 'full';

/** A count for this level: `name` from the environment when set, else `full` or `short`. */
export function proofCount(name: string, short: number, full: number): number {
  const v = process.env[name];
  if (v !== undefined && v !== '') {
    const n = Number(v);
    if (!Number.isFinite(n) || n <= 0) throw new Error(`${name} must be a positive number, not '${v}'`);
    return n;
  }
  return PROOF_FULL ? full : short;
}
