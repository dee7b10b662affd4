import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { PA_PER_UNIT, PRESSURE_UNIT_IDS, PRESSURE_UNIT_LABELS, convertPressure, fromPa, toPa, waterDensityTanaka, G_N, isPressureUnitId } from './units';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('units', () => {
  it('NIST SP 811 (2008) Appendix B.9 factors', () => {
    expect(PA_PER_UNIT.bar).toBe(1e5); // SP 811 B.9: bar = 1.0 E+05 Pa exact
    expect(rel(PA_PER_UNIT.psi, 6894.757293168)).toBeLessThan(1e-12); // SP 811 B.9 (from lbf and inch)
    expect(rel(PA_PER_UNIT.torr, 101325 / 760)).toBeLessThan(1e-15); // SP 811 B.9: torr = 101 325/760 Pa
    expect(rel(PA_PER_UNIT.mmHg, 133.322387415)).toBeLessThan(1e-12); // SP 811 B.9: mmHg conventional
    expect(rel(PA_PER_UNIT['inHg(conv)'], 3386.389)).toBeLessThan(2e-7); // SP 811 B.9: 3.386 389 E+03
    expect(PA_PER_UNIT['inHg@32F']).toBe(3386.38); // SP 811 B.9: inch of mercury (32 °F)
    expect(PA_PER_UNIT['inHg@60F']).toBe(3376.85); // SP 811 B.9: inch of mercury (60 °F)
    expect(rel(PA_PER_UNIT['mmH2O(conv)'], 9.80665)).toBeLessThan(1e-15); // SP 811 B.9: exact
    expect(rel(PA_PER_UNIT['inH2O(conv)'], 249.0889)).toBeLessThan(1e-6); // SP 811 B.9: 2.490 889 E+02
    expect(PA_PER_UNIT['kgf/cm2']).toBeCloseTo(98066.5, 9); // SP 811 B.9: 9.806 65 E+04 exact
    // Water columns computed from Tanaka (2001) + g_n against SP 811's 6-digit entries. SP 811 used
    // an older 4 °C density (999.972 kg/m³), so agreement is to its rounding, a few ppm.
    expect(rel(PA_PER_UNIT['inH2O@4C'], 249.082)).toBeLessThan(5e-6); // SP 811 B.9: inH2O (39.2 °F)
    expect(rel(PA_PER_UNIT['inH2O@60F'], 248.84)).toBeLessThan(5e-5); // SP 811 B.9: inH2O (60 °F), 5 digits
    expect(rel(PA_PER_UNIT['ftH2O@4C'], 2988.98)).toBeLessThan(5e-6); // SP 811 B.9: ftH2O (39.2 °F)
  });

  it('Tanaka (2001) water density', () => {
    expect(waterDensityTanaka(20)).toBeCloseTo(998.2067, 4); // Tanaka et al., Metrologia 38 (2001): ρ(20 °C)
    // Maximum density near 3.98 °C (Tanaka 2001: a1 = −3.983035 °C is the temperature of maximum density).
    expect(waterDensityTanaka(3.983035)).toBeCloseTo(999.97495, 5);
    expect(() => waterDensityTanaka(50)).toThrow();
  });

  it('68 °F inch of water is about 0.18 % smaller than the 4 °C one (REFERENCE.md)', () => {
    expect(1 - PA_PER_UNIT['inH2O@68F'] / PA_PER_UNIT['inH2O@4C']).toBeCloseTo(0.00177, 4);
  });

  it('cross-checks from independent definitions (no general-purpose unit library is installed)', () => {
    // No npm unit library is installed in this repo, so units are checked against each other from
    // independent definitions instead.
    const lbf = 0.45359237 * G_N; // SP 811 B.9: pound-force = 4.448 222 N
    expect(rel(lbf / 0.0254 ** 2, PA_PER_UNIT.psi)).toBeLessThan(1e-15);
    expect(rel(lbf, 4.448222)).toBeLessThan(1e-7); // SP 811 B.9: 4.448 222 E+00 N
    // Column units scale with length: 1 ftH2O = 12 inH2O = 304.8 mmH2O at the same temperature.
    for (const t of ['@68F', '@4C', '@60F', '(conv)'] as const) {
      expect(rel(PA_PER_UNIT[`ftH2O${t}`], 12 * PA_PER_UNIT[`inH2O${t}`])).toBeLessThan(1e-14);
      expect(rel(PA_PER_UNIT[`inH2O${t}`], 25.4 * PA_PER_UNIT[`mmH2O${t}`])).toBeLessThan(1e-14);
    }
    // 1 atm = 760 torr = 101 325 Pa = 1.01325 bar (SP 811 B.9: standard atmosphere).
    expect(convertPressure(760, 'torr', 'bar')).toBeCloseTo(1.01325, 12);
    // 1 kgf/cm² = 10 000 mmH2O conventional (both from g_n and 1000 kg/m³).
    expect(rel(convertPressure(1, 'kgf/cm2', 'mmH2O(conv)'), 10000)).toBeLessThan(1e-14);
    // inHg conventional / mmHg = 25.4 exactly (same density 13 595.1 kg/m³).
    expect(rel(PA_PER_UNIT['inHg(conv)'] / PA_PER_UNIT.mmHg, 25.4)).toBeLessThan(1e-14);
  });

  it('ids and labels', () => {
    expect(new Set(PRESSURE_UNIT_IDS).size).toBe(PRESSURE_UNIT_IDS.length);
    for (const id of PRESSURE_UNIT_IDS) {
      expect(PRESSURE_UNIT_LABELS[id].length).toBeGreaterThan(0);
      expect(isPressureUnitId(id)).toBe(true);
    }
    expect(isPressureUnitId('inH2O')).toBe(false); // ambiguous without temperature
    expect(isPressureUnitId('toString')).toBe(false);
  });

  it('round-trips exactly to 1e-12 relative (property)', () => {
    const unit = fc.constantFrom(...PRESSURE_UNIT_IDS);
    fc.assert(
      fc.property(unit, unit, fc.double({ min: -1e9, max: 1e9, noNaN: true }), (a, b, v) => {
        const back = convertPressure(convertPressure(v, a, b), b, a);
        expect(Math.abs(back - v)).toBeLessThanOrEqual(1e-12 * Math.abs(v) + 1e-300);
        expect(Math.abs(fromPa(toPa(v, a), a) - v)).toBeLessThanOrEqual(1e-12 * Math.abs(v) + 1e-300);
      }),
    );
  });
});
