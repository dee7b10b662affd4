import { describe, expect, it } from 'vitest';
import { erf, erfc, normalCdf } from './normal';

describe('normal', () => {
  it('erf against Abramowitz & Stegun Table 7.1', () => {
    expect(erf(1)).toBeCloseTo(0.842700792949715, 14); // A&S Table 7.1: erf(1.0)
    expect(erf(0.5)).toBeCloseTo(0.520499877813047, 14); // A&S Table 7.1: erf(0.5)
    expect(erf(2)).toBeCloseTo(0.995322265018953, 14); // A&S Table 7.1: erf(2.0)
    expect(erf(-1)).toBeCloseTo(-0.842700792949715, 14);
    expect(erf(0)).toBe(0);
  });
  it('erfc in the tail', () => {
    // erfc(3) = 2.209049699858544e-5, erfc(5) = 1.537459794428035e-12 (value from memory, standard tables)
    expect(erfc(3) / 2.209049699858544e-5).toBeCloseTo(1, 12);
    expect(erfc(5) / 1.537459794428035e-12).toBeCloseTo(1, 10);
    expect(erf(3) + erfc(3)).toBeCloseTo(1, 15);
  });
  it('normal quantiles', () => {
    expect(normalCdf(1.959963984540054)).toBeCloseTo(0.975, 12); // 97.5 % quantile of N(0,1) (JCGM 100 Table G.1: 1.960)
    expect(normalCdf(0)).toBe(0.5);
    expect(normalCdf(-1.959963984540054)).toBeCloseTo(0.025, 12);
    expect(normalCdf(10)).toBe(1);
  });
});
