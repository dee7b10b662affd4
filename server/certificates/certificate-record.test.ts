import { describe, expect, it } from 'vitest';
import type { FrozenRecord, FrozenRun } from '../../shared/schemas/records';
import { captureStatements, certificateFromRecord, trimsFromRuns } from './certificate-record';

/**
 * Issue 11, finding 9: the certificate paired as-found points with trim readings and said every
 * point was captured hands-free with no leak. These records are invented.
 */
const T0 = '2026-03-02T08:00:00.000Z';

function cap(ma: number, extra: Record<string, unknown> = {}) {
  return { appliedDp: 25, appliedDpSd: 0, measuredMa: ma, measuredMaSd: 0, n: 20, startMs: 0, endMs: 0, leakRatePctSpanPerMin: null, manualReason: null, capturedBy: null, ...extra };
}

function run(kind: string, startedAt: string, points: Array<{ nominalPct: number; approach: 'up' | 'down'; ma: number; flags?: string[]; capture?: Record<string, unknown> }>, extra: Partial<FrozenRun> = {}): FrozenRun {
  return {
    id: `${kind}-${startedAt}`,
    kind,
    status: 'complete',
    trim: null,
    plan: {
      holdSeconds: 2,
      decisionRule: 'guard-band',
      trim: extra.trim ?? null,
      points: points.map((p, index) => ({ index, nominalPct: p.nominalPct, basis: 'flow', approach: p.approach, dpPct: p.nominalPct ** 2 / 100, targetDp: 25, expectedMa: 5.6 })),
    },
    // Only the fields the certificate reads: a fixture, not a full evaluation.
    results: { points: points.map((p, index) => ({ index, errorPctSpan: (p.ma - 5.6) / 0.16 })), hysteresis: [], maxHysteresisPctSpan: null, overallDecision: 'pass' } as unknown as FrozenRun['results'],
    startedBy: 'u-tech',
    startedAt,
    endedAt: startedAt,
    points: points.map((p, index) => ({ index, state: 'captured', flags: p.flags ?? [], capture: cap(p.ma, p.capture), reason: null })),
    events: [],
    ...extra,
  };
}

const asFound = run('as-found', '2026-03-02T08:00:00.000Z', [
  { nominalPct: 10, approach: 'up', ma: 6.1375 },
  { nominalPct: 50, approach: 'up', ma: 12.2, flags: ['manual'], capture: { manualReason: 'Calibrator display froze', capturedBy: 'tech@example.test' } },
  { nominalPct: 10, approach: 'down', ma: 6.14 },
]);
asFound.events = [{ kind: 'captured-manually', index: 1, at: '2026-03-02T08:05:00.000Z', byId: 'u-tech', byName: 'Tess Tech', reason: 'Calibrator display froze', before: null }];
const lowerBefore = run('trim', '2026-03-02T09:00:00.000Z', [{ nominalPct: 10, approach: 'up', ma: 6.1483, flags: ['leak'], capture: { leakRatePctSpanPerMin: 0.42 } }], { trim: 'lower-trim' });
const lowerAfter = run('trim', '2026-03-02T09:10:00.000Z', [{ nominalPct: 10, approach: 'up', ma: 5.6023 }], { trim: 'lower-trim' });
const spanOnce = run('trim', '2026-03-02T09:20:00.000Z', [{ nominalPct: 100, approach: 'up', ma: 20.001 }], { trim: 'span-trim' });
const asLeft = run('as-left', '2026-03-02T10:00:00.000Z', [
  { nominalPct: 10, approach: 'up', ma: 5.601 },
  { nominalPct: 75, approach: 'up', ma: 16.0, flags: ['overshoot'] },
]);
asLeft.events = [
  { kind: 'redone', index: 1, at: '2026-03-02T10:04:00.000Z', byId: 'u-tech', byName: 'Tess Tech', reason: 'Approached from above by mistake', before: { flags: ['overshoot'], capture: cap(16.082) } },
];

const record: FrozenRecord = {
  version: 1,
  frozenAt: T0,
  frozenBy: { id: 'u-tech', name: 'Tess Tech' },
  job: { id: '0123abcd-0000-4000-8000-000000000000', revision: 1, dueOn: '2026-03-01', permitNo: 'PTW-1', notes: '', assigneeId: 'u-tech', assigneeName: 'Tess Tech', createdAt: T0, checklist: {} },
  instrument: { id: 'i', tag: 'FT-900', kind: 'dp-flow', service: 'Invented service', location: 'Invented place', lrv: 0, urv: 2500, unit: 'mmH2O@68F', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 5, tolerancePct: 0.5, intervalDays: 365, primaryElement: null },
  standards: [],
  site: { name: 'Invented Works', domain: 'invented.test', settings: {} },
  runs: [asFound, lowerBefore, lowerAfter, spanOnce, asLeft],
  performers: [{ id: 'u-tech', name: 'Tess Tech' }],
};

describe('trimsFromRuns', () => {
  it('pairs each trim’s first reading (before) with its last (after), never an as-found point', () => {
    const trims = trimsFromRuns(record.runs);
    expect(trims).toHaveLength(2);
    expect(trims[0]).toMatchObject({ kind: 'lower-trim', beforeMa: 6.1483, afterMa: 5.6023 });
    expect(trims[0]!.beforeErrorPctSpan).toBeCloseTo((6.1483 - 5.6) / 0.16, 9);
    expect(trims[0]!.afterErrorPctSpan).toBeCloseTo((5.6023 - 5.6) / 0.16, 9);
    // Read once: no "after".
    expect(trims[1]).toMatchObject({ kind: 'span-trim', beforeMa: 20.001 });
    expect(trims[1]!.afterMa).toBeUndefined();
  });
});

describe('captureStatements', () => {
  const s = captureStatements(record.runs, new Map([['u-tech', 'Tess Tech']]));
  it('names each manual capture with who and the reason, and counts the rest as hands-free', () => {
    expect(s.manual).toHaveLength(1);
    expect(s.manual[0]).toContain('As-found point 2 (50 % flow, up) was captured manually by Tess Tech');
    expect(s.manual[0]).toContain('“Calibrator display froze”');
    // 3 as-found − 1 manual + 3 trim readings + 2 as-left.
    expect(s.handsFree).toBe(7);
  });
  it('names the leak with its rate, the overshoot, and the redo with its reason and the reading set aside', () => {
    const all = s.remarks.join('\n');
    expect(all).toMatch(/Lower trim \(reading 1 of 2, before the trim\) point 1 \(10 % flow, up\): leak flagged.*0\.420 % of span per minute/);
    expect(all).toContain('As-left point 2 (75 % flow, up): overshoot on the approach');
    expect(all).toMatch(/As-left point 2 \(75 % flow, up\) was measured again \(redo\) by Tess Tech at 2026-03-02 10:04 UTC; reason: “Approached from above by mistake”\. The reading set aside was 16\.0820 mA \(flags: overshoot\)\./);
  });
});

describe('certificateFromRecord', () => {
  it('takes everything from the record and dates an approved certificate by its approval', () => {
    const d = certificateFromRecord(record, {
      signatures: [{ decision: 'approve', signerName: 'Lee Lead', meaning: 'approved', signedAt: '2026-03-03T12:34:56.000Z' }],
      approved: true,
      draftDate: '2099-01-01',
    });
    expect(d.draft).toBe(false);
    expect(d.issueDate).toBe('2026-03-03');
    expect(d.issuedAt).toBe('2026-03-03T12:34:56.000Z');
    expect(d.certificateNumber).toBe('FT-900-0123ABCD');
    expect(d.instrument).toMatchObject({ tag: 'FT-900', range: { lrv: 0, urv: 2500 }, tolerancePctSpan: 0.5 });
    expect(d.method.captures?.manual).toHaveLength(1);
    expect(d.remarks?.some((r) => r.includes('leak flagged'))).toBe(true);
  });
  it('says plainly when no point carried a flag', () => {
    const clean = { ...record, runs: [run('as-found', T0, [{ nominalPct: 10, approach: 'up', ma: 5.6 }])] };
    const d = certificateFromRecord(clean, { signatures: [], approved: false, draftDate: '2026-03-02' });
    expect(d.draft).toBe(true);
    expect(d.remarks).toEqual(['No point carried a leak, overshoot or instability flag, and no point was measured again.']);
  });
});
