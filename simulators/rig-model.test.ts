import { describe, expect, it } from 'vitest';
import { seededRng } from '../shared/random';
import {
  DEFAULT_SOURCE,
  DEFAULT_TRANSMITTER,
  restingSource,
  rootedFlowFraction,
  setSetpoint,
  stepSource,
  transmitterOutput,
  type SourceState,
  type TransmitterConfig,
} from './rig-model';

const rng = seededRng(3);
const mA = (config: Partial<TransmitterConfig>, pressure: number): number =>
  transmitterOutput({ ...DEFAULT_TRANSMITTER, ...config }, { playFraction: undefined }, pressure, rng).currentMa;

function run(state: SourceState, seconds: number, config = DEFAULT_SOURCE, dt = 0.01): SourceState {
  let s = state;
  for (let i = 0; i < Math.round(seconds / dt); i += 1) s = stepSource(s, config, dt, rng);
  return s;
}

describe('transmitter model (check values: practice, REFERENCE.md "Transfer functions")', () => {
  it('linear and rooted outputs', () => {
    expect(mA({}, 25)).toBeCloseTo(8, 9);
    expect(mA({ outputMode: 'sqrt-transmitter' }, 25)).toBeCloseTo(12, 9);
    expect(mA({ outputMode: 'sqrt-transmitter' }, 1)).toBeCloseTo(5.6, 9);
    expect(mA({}, 1)).toBeCloseTo(4.16, 9);
    expect(mA({ outputMode: 'sqrt-transmitter' }, 6.25)).toBeCloseTo(8, 9);
    // Square root in the host: the transmitter itself is linear.
    expect(mA({ outputMode: 'sqrt-host' }, 25)).toBeCloseTo(8, 9);
  });

  it('low-flow cutoff: clamp and linear below a breakpoint, continuous at the breakpoint', () => {
    expect(rootedFlowFraction(0.0081, { mode: 'clamp', flowPct: 10 })).toBe(0); // 9 % flow
    expect(rootedFlowFraction(0.01, { mode: 'clamp', flowPct: 10 })).toBeCloseTo(0.1, 12);
    const lin = { mode: 'linear-below', breakpointDpPct: 1 } as const;
    expect(rootedFlowFraction(0.005, lin)).toBeCloseTo(0.05, 12); // (10/√1)·0.5 % = 5 % flow
    expect(rootedFlowFraction(0.00999999, lin)).toBeCloseTo(rootedFlowFraction(0.01, lin), 6);
    expect(rootedFlowFraction(-0.02, { mode: 'none' })).toBe(0);
  });

  it('zero, span and non-linearity errors in % of span', () => {
    expect(mA({ zeroErrorPct: 0.5 }, 0)).toBeCloseTo(4.08, 9);
    expect(mA({ spanErrorPct: 1 }, 100)).toBeCloseTo(20.16, 9);
    expect(mA({ nonLinearityPct: 0.25 }, 50)).toBeCloseTo(12.04, 9);
    expect(mA({ nonLinearityPct: 0.25 }, 100)).toBeCloseTo(20, 9);
  });

  it('hysteresis: rising and falling readings differ by the set % of span', () => {
    const config = { ...DEFAULT_TRANSMITTER, hysteresisPct: 0.2 };
    let state = { playFraction: undefined as number | undefined };
    for (const p of [0, 20, 40, 50]) state = transmitterOutput(config, state, p, rng).state;
    const up = transmitterOutput(config, state, 50, rng).currentMa;
    for (const p of [80, 100, 70, 50]) state = transmitterOutput(config, state, p, rng).state;
    const down = transmitterOutput(config, state, 50, rng).currentMa;
    expect(((down - up) / 16) * 100).toBeCloseTo(0.2, 9);
  });

  it('NE 43: saturation at 3.8 and 20.5 mA, failure currents 3.6 and 21.0 mA (NAMUR NE 43, 2021)', () => {
    expect(mA({}, -10)).toBe(3.8);
    expect(mA({}, 120)).toBe(20.5);
    expect(mA({}, 102)).toBeCloseTo(20.32, 9);
    expect(mA({ failure: 'low' }, 50)).toBe(3.6);
    expect(mA({ failure: 'high' }, 50)).toBe(21.0);
  });

  it('output noise has the set standard deviation', () => {
    const config = { ...DEFAULT_TRANSMITTER, outputNoiseMa: 0.01 };
    const values = Array.from({ length: 4000 }, () => transmitterOutput(config, { playFraction: undefined }, 50, rng).currentMa);
    const mean = values.reduce((a, b) => a + b, 0) / values.length;
    const sd = Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / (values.length - 1));
    expect(mean).toBeCloseTo(12, 2);
    expect(sd).toBeGreaterThan(0.009);
    expect(sd).toBeLessThan(0.011);
  });
});

describe('pressure source model', () => {
  it('approaches the setpoint first-order and isolates inside the band', () => {
    const config = { ...DEFAULT_SOURCE, timeConstantS: 1 };
    const s = setSetpoint(restingSource(0), 50, 0);
    // After one time constant: 1 − e⁻¹ = 63.2 % of the step.
    expect(run(s, 1, config).pressure).toBeCloseTo(50 * (1 - Math.exp(-1)), 0);
    const settled = run(s, 12, config);
    expect(settled.phase).toBe('isolated');
    expect(Math.abs(settled.pressure - 50)).toBeLessThanOrEqual(config.isolateBand);
  });

  it('overshoots past the setpoint, then comes back', () => {
    const config = { ...DEFAULT_SOURCE, timeConstantS: 0.2 };
    let s = setSetpoint(restingSource(0), 40, 0.1);
    let peak = 0;
    for (let t = 0; t < 6; t += 0.01) {
      s = stepSource(s, config, 0.01, rng);
      peak = Math.max(peak, s.pressure);
    }
    expect(peak).toBeGreaterThan(43.9);
    expect(s.phase).toBe('isolated');
    expect(s.pressure).toBeCloseTo(40, 1);
  });

  it('leaks at the set rate once isolated, towards zero', () => {
    const config = { ...DEFAULT_SOURCE, leakPerMin: 0.6 };
    const s = run(restingSource(30), 10, config);
    expect(s.pressure).toBeCloseTo(29.9, 6);
    expect(run(restingSource(0.05), 10, config).pressure).toBe(0);
  });
});
