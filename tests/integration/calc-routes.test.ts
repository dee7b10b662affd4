import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
let c: ApiClient;
beforeAll(async () => {
  srv = await startTestServer();
  c = new ApiClient(srv.url);
  await c.login(demoEmail('tech'));
}, 300_000);
afterAll(async () => {
  await srv?.close();
});

describe('POST /api/calc/evaluate', () => {
  it('returns k and ν_eff beside U, k from ν_eff (issue 12 example), and undecided with its reason', async () => {
    // Issue 12 example (JCGM 100:2008 G.3–G.4, Table G.2): ν_eff ≈ 2.02, k ≈ 4.49, U ≈ 0.110 % span, TUR ≈ 7.2.
    const body = {
      instrument: { lrv: 0, urv: 2.88918, unit: 'ftH2O@4C', outputMode: 'sqrt-transmitter', tolerancePctSpan: 0.8 },
      standards: { pressure: { kind: 'certificate', unit: 'ftH2O@4C', expandedU: 0.0002, k: 2 }, current: { pctOfReading: 0.004, floorMa: 0.0004 } },
      decisionRule: 'simple',
      readings: [{ nominalPct: 75, direction: 'down', appliedDp: 2.88918 * 0.5625, measuredMa: 16, n: 2, measuredMaSd: 0.00337, appliedDpSd: 0.0011697 }],
    };
    const r = await c.post('/api/calc/evaluate', body);
    expect(r.status).toBe(200);
    const p = r.body.points[0];
    expect(p.effectiveDof).toBeCloseTo(2.016, 2);
    expect(p.coverageFactor).toBeCloseTo(4.49, 2);
    expect(Math.abs(p.expandedUncertaintyPctSpan - 0.11)).toBeLessThan(0.001);
    expect(p.tur).toBeCloseTo(7.2, 1);
    const u = await c.post('/api/calc/evaluate', {
      ...body,
      decisionRule: 'guard-band',
      instrument: { ...body.instrument, cutoffMode: 'none' },
      readings: [{ nominalPct: 0, direction: 'up', appliedDp: 0, measuredMa: 4 }],
    });
    expect(u.status).toBe(200);
    expect(u.body.points[0].decision).toBe('undecided');
    expect(u.body.points[0].undecided.reason).toBe('uncertainty-unknown');
  });
});

describe('POST /api/calc/intervals', () => {
  it('evaluates a given history with given targets', async () => {
    const r = await c.post('/api/calc/intervals', { history: [{ intervalDays: 365, inTolerance: 15, total: 20 }], currentIntervalDays: 365, reliabilityTarget: 0.95, confidence: 0.5 });
    expect(r.status).toBe(200);
    expect(r.body.test.verdict).toBe('shorten');
    // Exponential model: 365·ln 0.95/ln 0.75 = 65.06 d.
    expect(r.body.exponential.estimateDays).toBeCloseTo(65.06, 1);
    expect(r.body.exponential.rangeDays).toHaveLength(2);
  });
  it('refuses a bad body with field errors and an anonymous caller', async () => {
    const bad = await c.post('/api/calc/intervals', { history: [{ intervalDays: -1, inTolerance: 5, total: 3 }], currentIntervalDays: 365, reliabilityTarget: 1.5 });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('validation_failed');
    expect(Object.keys(bad.body.error.fields ?? {}).length).toBeGreaterThan(0);
    const anon = new ApiClient(srv.url);
    expect((await anon.post('/api/calc/intervals', { history: [], currentIntervalDays: 1 })).status).toBe(401);
  });
});

describe('POST /api/calc/orifice', () => {
  it('ISO 5167-2 flow in the requested unit with C and ε, and the constant-C departure at low flow', async () => {
    const element = { kind: 'orifice', pipeDiameterMm: 100, boreDiameterMm: 50, taps: 'corner', fluid: 'liquid', densityKgM3: 998.2, viscosityPaS: 0.001 };
    const r = await c.post('/api/calc/orifice', { element, dp: 0.25, unit: 'kPa', dpMax: 25, flowUnit: 'm3/h' });
    expect(r.status).toBe(200);
    expect(r.body.flowUnit).toBe('m3/h');
    expect(r.body.epsilon).toBe(1);
    expect(r.body.C).toBeGreaterThan(0.59);
    expect(r.body.pureRootDeparturePct).toBeLessThan(0);
    const bad = await c.post('/api/calc/orifice', { element: { ...element, boreDiameterMm: 120 }, dp: -1, unit: 'kPa' });
    expect(bad.status).toBe(400);
    expect(Object.keys(bad.body.error.fields ?? {}).length).toBeGreaterThan(0);
  });
});
