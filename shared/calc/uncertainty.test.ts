import { describe, expect, it } from 'vitest';
import { pointBudget, welchSatterthwaite } from './uncertainty';
import type { TransferSpec } from './transfer';

const spec: TransferSpec = { range: { lrv: 0, urv: 100, unit: 'kPa' }, mode: 'linear' };

describe('GUM budget (JCGM 100:2008)', () => {
  it('worked by hand: linear 0–100 kPa at 50 kPa', () => {
    const b = pointBudget(
      spec,
      { appliedDp: 50, measuredMa: 12, measuredMaSd: 0.002, n: 10 },
      { kind: 'spec', unit: 'kPa', pctOfReading: 0.02, pctOfFullScale: 0.01, fullScale: 200 },
      { pctOfReading: 0.01, floorMa: 0.001, resolutionMa: 0.001 },
      2,
    )!;
    // Pressure reference: a = 0.02 % × 50 kPa + 0.01 % × 200 kPa = 0.010 + 0.020 = 0.030 kPa
    //   rectangular u = 0.030/√3 = 0.0173205 kPa (GUM 4.3.7); c = 16 mA/100 kPa = 0.16 mA/kPa
    //   c·u = 0.00277128 mA, (c·u)² = 0.16² × 0.03²/3 = 7.680e-6 mA²
    // Meter: a = 0.01 % × 12 mA + 0.001 mA = 0.0022 mA → u = 0.0022/√3; u² = 4.84e-6/3 = 1.61333e-6 mA²
    // Resolution 0.001 mA → u = 0.001/(2√3) (GUM F.2.2.1); u² = 1e-6/12 = 8.3333e-8 mA²
    // Repeatability: s = 0.002 mA, n = 10 → u = 0.002/√10; u² = 4e-7 mA², ν = 9 (GUM 4.2)
    // u_c² = 7.680e-6 + 1.61333e-6 + 8.3333e-8 + 4e-7 = 9.77667e-6 → u_c = 0.003126767 mA
    // U = 2 × u_c = 0.006253532 mA = 0.006253532/16 × 100 = 0.03908458 % of span
    // ν_eff = u_c⁴/(u_rep⁴/9) = (9.77667e-6)²/((4e-7)²/9) = 5376.6 (GUM G.2b)
    const ucExpected = Math.sqrt(7.68e-6 + 4.84e-6 / 3 + 1e-6 / 12 + 4e-7);
    expect(b.components).toHaveLength(4);
    expect(b.ucMa).toBeCloseTo(ucExpected, 12);
    expect(b.ucMa).toBeCloseTo(0.003126767, 8);
    expect(b.expandedMa).toBeCloseTo(0.006253532, 8);
    expect(b.expandedPctSpan).toBeCloseTo(0.03908458, 7);
    expect(b.effectiveDof).toBeCloseTo((ucExpected ** 4 * 9) / 4e-7 ** 2, 6);
    expect(b.effectiveDof).toBeCloseTo(5376.6, 0);
    expect(b.k).toBe(2);
    expect(b.coverageProbability).toBeNull();
  });

  it('default coverage: k = t_95.45(ν_eff) (JCGM 100:2008 G.3–G.4, Table G.2)', () => {
    // Only the current meter (Type B, tiny) and a Type A term with n = 3 (ν = 2): ν_eff ≈ 2, so
    // k ≈ t_95.45(2) = 4.53 (Table G.2) and not 2.
    const b = pointBudget(spec, { appliedDp: 50, measuredMa: 12, measuredMaSd: 0.01, n: 3 }, { kind: 'certificate', unit: 'kPa', expandedU: 0, k: 2 }, { pctOfReading: 0, floorMa: 0 })!;
    expect(b.effectiveDof).toBeCloseTo(2, 12);
    expect(b.k).toBeCloseTo(4.53, 2);
    expect(b.coverageProbability).toBe(0.9545);
    expect(b.expandedMa).toBeCloseTo(b.k * (0.01 / Math.sqrt(3)), 12);
  });

  it('Type A of the per-reading error series replaces the two channel terms; floored at the resolution term', () => {
    const ref = { kind: 'certificate', unit: 'kPa', expandedU: 0.002, k: 2 } as const;
    const meter = { pctOfReading: 0, floorMa: 0, resolutionMa: 0.001 };
    const b = pointBudget(spec, { appliedDp: 50, measuredMa: 12, measuredMaSd: 0.01, appliedDpSd: 0.05, n: 300, typeA: { uMa: 0.0005, dof: 20 } }, ref, meter)!;
    expect(b.components.map((c) => c.name)).toEqual(['pressure-reference', 'current-meter', 'current-resolution', 'repeatability-error']);
    expect(b.components[3]!.u).toBe(0.0005);
    expect(b.components[3]!.dof).toBe(20);
    // A Type A below the resolution term δ/(2√3) = 0.000288675 mA is raised to it (GUM F.2.2.1).
    const f = pointBudget(spec, { appliedDp: 50, measuredMa: 12, typeA: { uMa: 1e-6, dof: 50 } }, ref, meter)!;
    expect(f.components[3]!.u).toBeCloseTo(0.001 / (2 * Math.sqrt(3)), 15);
  });

  it('certificate U/k, unit conversion and the root sensitivity', () => {
    const rooted: TransferSpec = { ...spec, mode: 'sqrt-transmitter' };
    // U = 0.02 kPa (k = 2) given in mbar: 0.2 mbar → u = 0.01 kPa. At 25 % DP, d flow%/d DP% = 5/√25 = 1,
    // c = 16 × 1/100 = 0.16 mA/kPa → contribution 0.0016 mA.
    const b = pointBudget(rooted, { appliedDp: 25, measuredMa: 12 }, { kind: 'certificate', unit: 'mbar', expandedU: 0.2, k: 2 }, { pctOfReading: 0, floorMa: 0 })!;
    expect(b.components[0]!.contributionMa).toBeCloseTo(0.0016, 12);
    // At 1 % DP the gain is 5 × larger (5/√1 = 5): 0.008 mA.
    const b1 = pointBudget(rooted, { appliedDp: 1, measuredMa: 5.6 }, { kind: 'certificate', unit: 'kPa', expandedU: 0.02, k: 2 }, { pctOfReading: 0, floorMa: 0 })!;
    expect(b1.components[0]!.contributionMa).toBeCloseTo(0.008, 12);
    expect(b1.effectiveDof).toBe(Infinity);
    expect(pointBudget(rooted, { appliedDp: 0, measuredMa: 4 }, { kind: 'certificate', unit: 'kPa', expandedU: 0.02, k: 2 }, { pctOfReading: 0, floorMa: 0 })).toBeUndefined();
  });

  it('Welch–Satterthwaite with two Type A terms', () => {
    // u1 = u2 = 1, ν1 = ν2 = 4: ν_eff = 2²/(1/4 + 1/4) = 8
    expect(welchSatterthwaite([{ value: 1, dof: 4 }, { value: 1, dof: 4 }])).toBeCloseTo(8, 12);
  });
});
