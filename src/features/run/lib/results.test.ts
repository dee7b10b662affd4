import { describe, expect, it } from 'vitest';
import { hysteresisAt, parseResults, resultsByPoint, spanWords, type RunResults } from './results';

/**
 * Issue 11, finding 10: the results column computed hysteresis from |mA up − mA down|, which
 * counts the difference in applied DP as hysteresis (0.096 % on a perfect transmitter whose two
 * readings sat at slightly different DPs). The screens now show the API's value. Invented numbers.
 */
const api = {
  points: [
    { index: 0, nominalPct: 50, basis: 'flow', direction: 'up', appliedDp: 24.9, expectedMa: 11.968, measuredMa: 11.968, errorPctSpan: 0, decision: 'pass' },
    { index: 1, nominalPct: 50, basis: 'flow', direction: 'down', appliedDp: 25.1, expectedMa: 12.0834, measuredMa: 12.0836, errorPctSpan: 0.00125, decision: 'pass' },
  ],
  hysteresis: [{ nominalPct: 50, basis: 'flow', hysteresisPctSpan: 0.00125 }],
  maxHysteresisPctSpan: 0.00125,
  overallDecision: 'pass',
};
/** The fields these helpers read; a full result also carries U, k, TUR and more (RunResultsSchema). */
const results = (r: object) => r as unknown as RunResults;

describe('parseResults', () => {
  it('refuses results that do not match the one results contract', () => {
    expect(parseResults(api)).toBeNull();
    expect(parseResults(null)).toBeNull();
  });
});

describe('hysteresisAt', () => {
  it('shows the evaluated hysteresis (difference of errors), not the mA difference', () => {
    const r = results(api);
    expect(hysteresisAt(r, r.points[0]!)).toBe(0.00125);
    expect(hysteresisAt(r, r.points[1]!)).toBe(0.00125);
    // What the old column showed: |ΔmA| / 16 mA × 100.
    expect(Math.abs(api.points[0]!.measuredMa - api.points[1]!.measuredMa) / 0.16).toBeGreaterThan(0.7);
  });
  it('is null for a nominal not read both ways', () => {
    const r = results({ ...api, hysteresis: [] });
    expect(hysteresisAt(r, r.points[0]!)).toBeNull();
  });
});

describe('resultsByPoint', () => {
  it('gives the k-th result to the k-th captured point', () => {
    const r = results(api);
    const m = resultsByPoint(
      [
        { index: 0, capture: {} },
        { index: 1, capture: null },
        { index: 2, capture: {} },
      ],
      r,
    );
    expect(m.get(0)?.direction).toBe('up');
    expect(m.has(1)).toBe(false);
    expect(m.get(2)?.direction).toBe('down');
  });
});

describe('spanWords', () => {
  it('says flow span only for a root in the transmitter (REFERENCE.md, transfer functions)', () => {
    expect(spanWords('sqrt-transmitter', true)).toBe('flow span');
    expect(spanWords('sqrt-host', true)).toBe('span');
    expect(spanWords('linear', false)).toBe('span');
  });
});
