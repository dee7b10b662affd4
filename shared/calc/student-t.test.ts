import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { coverageFactor, DEFAULT_COVERAGE_POLICY, regularizedIncompleteBeta, studentTCentralProbability, studentTQuantile } from './student-t';

describe("Student's t quantile (JCGM 100:2008 G.3)", () => {
  it('reproduces JCGM 100:2008 Table G.2 at p = 95.45 %', () => {
    // JCGM 100:2008 Table G.2, column p = 95.45 % (values to two decimals).
    const table: Array<[number, number]> = [
      [1, 13.97],
      [2, 4.53],
      [3, 3.31],
      [4, 2.87],
      [5, 2.65],
      [10, 2.28],
      [20, 2.13],
      [50, 2.05],
      [100, 2.03],
    ];
    for (const [nu, t] of table) expect(Math.abs(studentTQuantile(0.9545, nu) - t)).toBeLessThan(0.006);
    // ν = ∞: the normal distribution, k = 2 (Table G.1: p = 95.45 % ⇔ k = 2).
    expect(studentTQuantile(0.9545, Infinity)).toBeCloseTo(2, 9);
  });
  it('reproduces JCGM 100:2008 Table G.2 at p = 95 % and 99.73 %', () => {
    // JCGM 100:2008 Table G.2, columns p = 95 % and p = 99.73 %.
    expect(studentTQuantile(0.95, 1)).toBeCloseTo(12.71, 2);
    expect(studentTQuantile(0.95, 2)).toBeCloseTo(4.3, 2);
    expect(studentTQuantile(0.95, 10)).toBeCloseTo(2.23, 2);
    expect(studentTQuantile(0.95, Infinity)).toBeCloseTo(1.96, 2);
    expect(studentTQuantile(0.9973, 1)).toBeCloseTo(235.8, 0);
    expect(studentTQuantile(0.9973, 2)).toBeCloseTo(19.21, 2);
    expect(studentTQuantile(0.9973, 5)).toBeCloseTo(5.51, 2);
  });
  it('closed forms at ν = 1 and ν = 2', () => {
    // ν = 1 is the Cauchy distribution: t_p = tan(πp/2). ν = 2: t_p = p·√(2/(1 − p²)). (Standard
    // closed forms of the t distribution, derivable from its density.)
    for (const p of [0.5, 0.9, 0.95, 0.99]) {
      expect(studentTQuantile(p, 1)).toBeCloseTo(Math.tan((Math.PI * p) / 2), 7);
      expect(studentTQuantile(p, 2)).toBeCloseTo(p * Math.sqrt(2 / (1 - p * p)), 7);
    }
  });
  it('non-integer ν lies between its integer neighbours (the issue 12 example: ν_eff = 2.016)', () => {
    const t = studentTQuantile(0.9545, 2.016);
    expect(t).toBeLessThan(studentTQuantile(0.9545, 2));
    expect(t).toBeGreaterThan(studentTQuantile(0.9545, 3));
    expect(t).toBeCloseTo(4.49, 2);
  });
  it('incomplete beta: I_x(1, 1) = x and I_x(a, b) = 1 − I_{1−x}(b, a)', () => {
    expect(regularizedIncompleteBeta(0.3, 1, 1)).toBeCloseTo(0.3, 14);
    expect(regularizedIncompleteBeta(0.2, 2.5, 0.5) + regularizedIncompleteBeta(0.8, 0.5, 2.5)).toBeCloseTo(1, 12);
    expect(studentTCentralProbability(0, 3)).toBe(0);
  });
  it('property: at the default coverage k ≥ 2 and decreasing toward 2 as ν grows', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.5, max: 1e6, noNaN: true }), fc.double({ min: 1.0001, max: 10, noNaN: true }), (nu, f) => {
        const k1 = coverageFactor(DEFAULT_COVERAGE_POLICY, nu);
        const k2 = coverageFactor(DEFAULT_COVERAGE_POLICY, nu * f);
        expect(k1).toBeGreaterThanOrEqual(2 - 1e-9); // bisection tolerance 1e-12
        expect(k2).toBeLessThanOrEqual(k1 + 1e-9);
      }),
    );
    expect(coverageFactor(DEFAULT_COVERAGE_POLICY, 1e9)).toBeCloseTo(2, 6);
    expect(coverageFactor({ mode: 'fixed', k: 2 }, 2)).toBe(2);
  });
});
