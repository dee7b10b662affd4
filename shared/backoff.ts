/**
 * Capped exponential backoff, the one rule for every retry in Stillpoint (serial reopen, the page's
 * WebSocket, the bench agent's link, mail delivery, the sample writer): the delay before attempt
 * n + 1 after n consecutive failures (n ≥ 1) is min(max, initial · factor^(n − 1)). Common practice;
 * a caller that wants jitter adds it to the result.
 */
export interface BackoffOptions {
  /** Delay after the first failure, ms. */
  initialMs: number;
  /** Longest delay, ms. */
  maxMs: number;
  /** Growth per failure; default 2. */
  factor?: number;
}

/** Delay after `failures` consecutive failures (values below 1 count as 1). */
export function backoffDelay(failures: number, o: BackoffOptions): number {
  const n = Math.max(1, Math.floor(failures));
  // The exponent is capped so a long outage never overflows to Infinity before the cap applies.
  const raw = o.initialMs * (o.factor ?? 2) ** Math.min(n - 1, 60);
  return Math.max(0, Math.min(o.maxMs, raw));
}
