import { describe, expect, it } from 'vitest';
import { seedDemoHistory } from '../../server/demo/demo-history';
import { useLeadAndTech } from './records-helpers';

const ctx = useLeadAndTech();

async function instrumentId(tag: string): Promise<string> {
  return (await ctx.lead.get(`/api/instruments?q=${tag}`)).body.items.find((i: { tag: string }) => i.tag === tag).id;
}

describe('demo history', () => {
  it('writes two-plus years of approved calibrations on a few tags, and one job waiting for review with its raw trace', async () => {
    // The demo seed writes the history on first start; seeding again writes nothing.
    const entry = (await ctx.lead.get('/api/audit?entity=site&limit=1000')).body.items.find((e: { action: string }) => e.action === 'demo.history-seeded');
    const seeded = entry.after as { tags: string[]; jobs: number; samples: number };
    expect(seeded.tags).toEqual(['FT-101', 'FT-103', 'PT-104', 'FT-301']);
    expect(seeded.jobs).toBeGreaterThanOrEqual(4 + 7 + 4 + 4 + 1);
    expect(seeded.samples).toBeGreaterThan(10_000);
    expect(await seedDemoHistory(ctx.srv.database.db)).toMatchObject({ jobs: 0, tags: [] });
    const approved = (await ctx.lead.get('/api/records?status=approved')).body.items as Array<{ tag: string; lastSignature: { meaning: string; signerName: string } }>;
    expect(approved.filter((r) => r.tag === 'FT-101')).toHaveLength(4);
    expect(approved[0]!.lastSignature).toMatchObject({ meaning: 'reviewed and approved', signerName: 'Bram Oduya' });
    const waiting = (await ctx.lead.get('/api/records?status=submitted')).body.items.find((r: { tag: string }) => r.tag === 'PT-302');
    const bundle = (await ctx.lead.get(`/api/jobs/${waiting.id}/review`)).body;
    expect(bundle.canSign).toBe(true);
    const asFound = bundle.job.runs.find((r: { kind: string }) => r.kind === 'as-found');
    const run = await ctx.lead.get(`/api/runs/${asFound.id}`);
    expect(run.status).toBe(200);
    expect(run.body.points).toHaveLength(9);
    expect(run.body.points.every((p: { state: string; capture: unknown }) => p.state === 'captured' && p.capture)).toBe(true);
    const p = run.body.points[2].capture;
    const trace = (await ctx.lead.get(`/api/runs/${asFound.id}/trace?from=${p.startMs}&to=${p.endMs}`)).body;
    expect(trace.items.length).toBeGreaterThan(500);
    expect(new Set(trace.items.map((s: { device: string }) => s.device))).toEqual(new Set(['pressure', 'current']));
    // The review trace: an envelope over the whole run, every raw sample over one hold.
    const wr = await ctx.lead.get(`/api/review/runs/${asFound.id}/trace?maxRaw=1000&buckets=300`);
    expect(wr.status, JSON.stringify(wr.body)).toBe(200);
    const whole = wr.body;
    expect(whole.mode).toBe('envelope');
    expect(whole.x.length).toBeLessThanOrEqual(301);
    expect(whole.total).toBeGreaterThan(10_000);
    const i = whole.dp.v.findIndex((v: number | null) => v !== null);
    expect(whole.dp.lo[i]).toBeLessThanOrEqual(whole.dp.v[i]);
    expect(whole.dp.hi[i]).toBeGreaterThanOrEqual(whole.dp.v[i]);
    const hold = (await ctx.lead.get(`/api/review/runs/${asFound.id}/trace?from=${p.startMs}&to=${p.endMs}`)).body;
    expect(hold.mode).toBe('raw');
    expect(hold.total).toBe(trace.items.length);
    expect(hold.raw).toHaveLength(hold.x.length);
    const dps = hold.dp.v.filter((v: number | null) => v !== null);
    const mean = dps.reduce((a: number, b: number) => a + b, 0) / dps.length;
    expect(mean).toBeCloseTo(p.appliedDp, 1);
  });
});

describe('drift and intervals', () => {
  it('gives as-found history per point, drift per interval, a prediction at the next due date and both recommendations', async () => {
    const id = await instrumentId('FT-101');
    const r = await ctx.tech.get(`/api/instruments/${id}/drift`);
    expect(r.status).toBe(200);
    const d = r.body;
    expect(d).toMatchObject({ calibrations: 4, unit: '% of span', tolerancePct: 0.5 });
    expect(d.points).toHaveLength(9);
    const p50 = d.points.find((p: { nominalPct: number; direction: string }) => p.nominalPct === 50 && p.direction === 'up');
    expect(p50.events).toHaveLength(4);
    expect(p50.drifts).toHaveLength(3);
    // Drift per interval = as-found(k) − as-left(k−1) (REFERENCE.md "Intervals and drift").
    expect(p50.drifts[1].drift).toBeCloseTo(p50.events[2].asFound - p50.events[1].asLeft, 10);
    expect(typeof p50.predictedAtDue).toBe('number');
    expect(d.recommendations.map((x: { method: string }) => x.method)).toEqual(['staircase', 'reliability']);
    for (const rec of d.recommendations) {
      expect(rec.recommendedDays).toBeGreaterThanOrEqual(30);
      expect(rec.basis.length).toBeGreaterThan(20);
    }
  });

  it('lets a ctx.lead accept a recommendation, changing the interval and auditing it; a technician may not', async () => {
    const id = await instrumentId('FT-103');
    const d = (await ctx.lead.get(`/api/instruments/${id}/drift`)).body;
    const rec = d.recommendations.find((x: { method: string }) => x.method === 'staircase');
    expect((await ctx.tech.post(`/api/instruments/${id}/interval`, { intervalDays: rec.recommendedDays, method: 'staircase' })).status).toBe(403);
    const stale = await ctx.lead.post(`/api/instruments/${id}/interval`, { intervalDays: rec.recommendedDays + 1, method: 'staircase' });
    expect(stale.status).toBe(400);
    const ok = await ctx.lead.post(`/api/instruments/${id}/interval`, { intervalDays: rec.recommendedDays, method: 'staircase' });
    expect(ok.status).toBe(200);
    expect(ok.body.intervalDays).toBe(rec.recommendedDays);
    const trail = (await ctx.lead.get(`/api/audit?entity=instrument&entityId=${id}`)).body.items as Array<{ action: string; before: unknown; after: unknown }>;
    expect(trail.find((e) => e.action === 'instrument.interval-changed')).toMatchObject({
      before: { intervalDays: 180 },
      after: { intervalDays: rec.recommendedDays, method: 'staircase' },
    });
  });
});

describe('queue', () => {
  it('lists open jobs (own first for a technician) and instruments without an open job that fall due', async () => {
    const q = (await ctx.tech.get('/api/queue?withinDays=400')).body;
    expect(q.withinDays).toBe(400);
    expect(q.jobs.every((j: { status: string }) => j.status !== 'approved')).toBe(true);
    const me = (await ctx.tech.get('/api/auth/me')).body.id;
    const firstOther = q.jobs.findIndex((j: { assigneeId: string | null }) => j.assigneeId !== me);
    const lastMine = q.jobs.map((j: { assigneeId: string | null }) => j.assigneeId === me).lastIndexOf(true);
    expect(lastMine).toBeLessThan(firstOther === -1 ? Infinity : firstOther);
    const tags = q.needsJob.map((n: { tag: string }) => n.tag);
    // PT-104 (calibrated 200 days ago, 365-day interval) has no open job; FT-101 has one.
    expect(tags).toContain('PT-104');
    expect(tags).not.toContain('FT-101');
    const narrow = (await ctx.tech.get('/api/queue?withinDays=0')).body;
    expect(narrow.needsJob.every((n: { daysLeft: number | null }) => n.daysLeft === null || n.daysLeft <= 0)).toBe(true);
  });

  it('lets a ctx.lead create and assign a job for an instrument that needs one', async () => {
    const q = (await ctx.lead.get('/api/queue?withinDays=400')).body;
    const need = q.needsJob.find((n: { tag: string }) => n.tag === 'PT-104');
    const techId = (await ctx.tech.get('/api/auth/me')).body.id;
    const created = await ctx.lead.post('/api/jobs', { instrumentId: need.instrumentId, assigneeId: techId, dueOn: need.nextDueOn });
    expect(created.status).toBe(201);
    const after = (await ctx.lead.get('/api/queue?withinDays=400')).body;
    expect(after.needsJob.map((n: { tag: string }) => n.tag)).not.toContain('PT-104');
    expect(after.jobs.map((j: { tag: string }) => j.tag)).toContain('PT-104');
  });
});
