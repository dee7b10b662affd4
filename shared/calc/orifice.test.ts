import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { dischargeCoefficientRHG, expansibility, flowInUnit, orificeFlow, pointFlow, pureRootDeviation, type OrificeSpec } from './orifice';

describe('orifice flow (ISO 5167-2:2003)', () => {
  it('Reader-Harris/Gallagher C: fluids documentation example, C_Reader_Harris_Gallagher', () => {
    // fluids (CalebBell/fluids, fluids/flow_meter.py) docstring: D = 0.07391, Do = 0.0222, ρ = 1.165,
    // μ = 1.85e-5, m = 0.12 kg/s, flange taps → 0.5990326277163659
    const D = 0.07391;
    const reD = (4 * 0.12) / (Math.PI * D * 1.85e-5);
    expect(dischargeCoefficientRHG(D, 0.0222 / D, reD, 'flange')).toBeCloseTo(0.5990326277163659, 12);
  });
  it('expansibility: fluids documentation example, orifice_expansibility', () => {
    // fluids docstring: D = 0.0739, Do = 0.0222, P1 = 1e5, P2 = 9.9e4, k = 1.4 → 0.9974739057343425
    expect(expansibility(0.0222 / 0.0739, 1e5, 1e3, 1.4)).toBeCloseTo(0.9974739057343425, 14);
  });
  it('mass flow with iterated C: fluids documentation example, differential_pressure_meter_solver', () => {
    // fluids docstring: D = 0.07366, D2 = 0.05, P1 = 200000, P2 = 183000, ρ = 999.1, μ = 0.0011,
    // k = 1.33, 'ISO 5167 orifice', taps 'D' → m = 7.702338035732168 kg/s
    const r = orificeFlow({ D: 0.07366, d: 0.05, taps: 'D-D/2', rho: 999.1, mu: 0.0011, gas: { kappa: 1.33, p1: 200000 } }, 17000);
    if (!r.ok) throw new Error(r.reason);
    expect(r.value.massFlowKgPerS).toBeCloseTo(7.702338035732168, 9);
    expect(r.value.volumeFlowM3PerS).toBeCloseTo(7.702338035732168 / 999.1, 12);
    expect(r.value.warnings).toEqual([]);
  });
  it('reports limits of use as warnings', () => {
    const r = orificeFlow({ D: 0.04, d: 0.01, taps: 'corner', rho: 1000, mu: 0.05 }, 100);
    if (!r.ok) throw new Error(r.reason);
    expect(r.value.epsilon).toBe(1); // liquid
    expect(r.value.warnings.some((w) => w.includes('d < 12.5 mm'))).toBe(true);
    expect(r.value.warnings.some((w) => w.includes('D outside'))).toBe(true);
    expect(r.value.warnings.some((w) => w.includes('Re_D'))).toBe(true);
    expect(orificeFlow({ D: 0.1, d: 0.2, taps: 'corner', rho: 1000, mu: 1e-3 }, 100).ok).toBe(false);
  });
  it('a pure root under-reads at low DP (C rises as Re falls)', () => {
    const water: OrificeSpec = { D: 0.1, d: 0.05, taps: 'flange', rho: 998.2, mu: 1.0e-3 };
    const dev = pureRootDeviation(water, 250, 25000)!; // 1 % DP = 10 % flow
    expect(dev).toBeLessThan(0);
    // the under-reading shrinks as flow rises (at 50 % flow, 25 % DP, it is smaller than at 10 %)
    const dev50 = pureRootDeviation(water, 6250, 25000)!;
    expect(dev50).toBeLessThan(0);
    expect(Math.abs(dev50)).toBeLessThan(Math.abs(dev));
    expect(pureRootDeviation(water, 25000, 25000)).toBe(0);
  });
  it('flow is monotonic in DP (property)', () => {
    const s: OrificeSpec = { D: 0.1, d: 0.05, taps: 'corner', rho: 998.2, mu: 1e-3 };
    fc.assert(
      fc.property(fc.double({ min: 10, max: 1e5, noNaN: true }), fc.double({ min: 10, max: 1e5, noNaN: true }), (a, b) => {
        const [lo, hi] = a <= b ? [a, b] : [b, a];
        const qlo = orificeFlow(s, lo);
        const qhi = orificeFlow(s, hi);
        if (!qlo.ok || !qhi.ok) throw new Error('no flow');
        expect(qlo.value.massFlowKgPerS).toBeLessThanOrEqual(qhi.value.massFlowKgPerS * (1 + 1e-12));
      }),
      { numRuns: 100 },
    );
  });
});

describe('flow at a test point in engineering units', () => {
  it('ISO 5167-2 flow at the applied DP, with C and ε, and the low-flow departure of the constant-C root', () => {
    // Water, D = 100 mm, d = 50 mm, corner taps; 0–25 kPa for 0–100 % flow.
    const spec = { D: 0.1, d: 0.05, taps: 'corner' as const, rho: 998.2, mu: 0.001 };
    const full = pointFlow(spec, 25_000, 25_000, 'm3/h')!;
    const ref = orificeFlow(spec, 25_000);
    if (!ref.ok) throw new Error(ref.reason);
    expect(full.flow).toBeCloseTo((ref.value.massFlowKgPerS / 998.2) * 3600, 9);
    expect(full.C).toBe(ref.value.C);
    expect(full.epsilon).toBe(1); // liquid
    expect(full.pureRootDeparturePct).toBeCloseTo(0, 12);
    // At 10 % flow (1 % DP) Re is ten times lower, C is higher, so the pure root under-reads
    // (REFERENCE.md: "A pure root under-reads a real orifice at low flow").
    const low = pointFlow(spec, 250, 25_000, 'm3/h')!;
    expect(low.pureRootDeparturePct!).toBeLessThan(0);
    expect(low.pureRootDeparturePct!).toBeGreaterThan(-2);
    expect(flowInUnit(1, 1000, 'l/min')).toBe(60);
    expect(flowInUnit(1, 1000, 't/h')).toBe(3.6);
  });
});
