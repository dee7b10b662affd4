import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { backoffDelay } from './backoff';

describe('backoffDelay (capped exponential backoff, common practice)', () => {
  it('doubles from the first delay and stops at the cap', () => {
    const o = { initialMs: 500, maxMs: 10_000 };
    expect([1, 2, 3, 4, 5, 6, 7].map((n) => backoffDelay(n, o))).toEqual([500, 1000, 2000, 4000, 8000, 10_000, 10_000]);
  });
  it('takes another factor, and counts values below 1 as the first failure', () => {
    expect(backoffDelay(3, { initialMs: 100, maxMs: 1e6, factor: 3 })).toBe(900);
    expect(backoffDelay(0, { initialMs: 100, maxMs: 1e6 })).toBe(100);
  });
  it('is finite, non-decreasing in the failure count and never above the cap (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 10_000 }), fc.integer({ min: 0, max: 5000 }), fc.integer({ min: 0, max: 600_000 }), (n, initialMs, extra) => {
        const o = { initialMs, maxMs: initialMs + extra };
        const a = backoffDelay(n, o);
        const b = backoffDelay(n + 1, o);
        expect(Number.isFinite(a)).toBe(true);
        expect(a).toBeLessThanOrEqual(o.maxMs);
        expect(b).toBeGreaterThanOrEqual(a);
      }),
    );
  });
});
