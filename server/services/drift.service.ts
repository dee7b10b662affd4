import type { Db } from '../db/client';
import { instrumentRepository } from '../db/repositories/register.repository';
import { siteRepository, userRepository } from '../db/repositories/user.repository';
import { reviewRepository, type RunRow } from '../db/repositories/review.repository';
import { badRequest, notFound } from '../errors';
import { driftPerInterval, predictErrorAtDue, recommendIntervals, staircaseInterval, type CalibrationEvent } from '../../shared/calc';
import type { Instrument } from '../../shared/schemas/instruments';
import type { DriftPoint, DriftReport, IntervalRecommendation } from '../../shared/schemas/drift';
import type { NeedsJob, Queue } from '../../shared/schemas/queue';
import type { Actor, AuditService } from './audit.service';
import type { SessionUser } from './auth.service';
import { daysBetween } from './dates';
import { dateInZone, todayInZone } from '../../shared/format/dates';
import { createSiteClock } from './site-clock';
import type { JobService } from './job.service';
import { toInstrument } from './register.service';

/**
 * Interval-method parameters. Product defaults, not values fixed by the methods themselves:
 * ILAC-G24 / OIML D 10:2022 leave the staircase factors to the laboratory; the reliability target
 * and confidence are site settings (defaults 0.95 and 0.5, per output mode where the site sets
 * them); the reliability-model recommendation moves the interval at most by `maxChangeFactor`.
 */
export const INTERVAL_PARAMS = {
  staircase: { extendAtOrBelow: 0.5, extendFactor: 1.25, shortenFactor: 0.5, minDays: 30, maxDays: 1095 },
  reliability: { targetReliability: 0.95, confidence: 0.5, maxChangeFactor: 2 },
} as const;

/**
 * Which interval suggestion governs: the shorter one, so the tag is never left longer than either
 * method supports (common practice: when two interval methods disagree, the more conservative
 * result is used). On a tie the staircase governs: it follows the latest as-found directly.
 */
export function governingOf(recs: IntervalRecommendation[]): { method: 'staircase' | 'reliability'; reason: string } | null {
  if (!recs.length) return null;
  if (recs.length === 1) return { method: recs[0]!.method, reason: 'It is the only suggestion with enough history.' };
  const [a, b] = [...recs].sort((x, y) => x.recommendedDays - y.recommendedDays || (x.method === 'staircase' ? -1 : 1));
  const name = (m: string) => (m === 'staircase' ? 'staircase' : 'reliability-model');
  return a!.recommendedDays === b!.recommendedDays
    ? { method: a!.method, reason: `Both methods suggest ${a!.recommendedDays} days.` }
    : { method: a!.method, reason: `The ${name(a!.method)} suggestion (${a!.recommendedDays} days) is shorter than the ${name(b!.method)} one (${b!.recommendedDays} days); the shorter interval governs, so the tag is not left longer than either method supports.` };
}

interface PointResult {
  nominalPct: number;
  basis: 'flow' | 'dp';
  direction: 'up' | 'down';
  errorPctSpan: number;
}

/** Per-point errors from a run's results (parsed against RunResultsSchema in the repository). */
function pointsOf(run: RunRow | undefined): PointResult[] {
  return run?.results?.points ?? [];
}

const keyOf = (p: PointResult) => `${p.nominalPct}${p.basis === 'flow' ? 'F' : 'D'}-${p.direction}`;

export function createDriftService(db: Db, audit: AuditService, jobs: JobService) {
  const repo = reviewRepository(db);
  const instruments = instrumentRepository(db);
  const sites = siteRepository(db);
  const clock = createSiteClock(db);

  async function instrumentOf(id: string): Promise<Instrument> {
    const row = await instruments.get(id);
    if (!row) throw notFound('No such instrument');
    return toInstrument(row);
  }

  const service = {
    /**
     * Open work and what falls due: every job not yet approved (the signed-in technician's own
     * first), and instruments without an open job whose next due date (last approved calibration +
     * interval) is within `withinDays` — or that were never calibrated.
     */
    async queue(viewer: SessionUser, withinDays: number, on?: string): Promise<Queue> {
      const zone = await clock.zone();
      const today = on ?? todayInZone(zone);
      const open = (await jobs.list(viewer)).filter((j) => j.status !== 'approved');
      const busy = await repo.openJobInstrumentIds();
      const needsJob: NeedsJob[] = [];
      for (const row of await instruments.all()) {
        if (busy.has(row.id)) continue;
        const i = toInstrument(row);
        const daysLeft = i.nextDueOn ? daysBetween(today, i.nextDueOn) : null;
        if (daysLeft !== null && daysLeft > withinDays) continue;
        needsJob.push({
          instrumentId: i.id,
          tag: i.tag,
          service: i.service,
          location: i.location,
          intervalDays: i.intervalDays,
          lastCalibratedOn: i.lastCalibratedOn,
          nextDueOn: i.nextDueOn,
          daysLeft,
          overdue: daysLeft === null || daysLeft < 0,
        });
      }
      needsJob.sort((a, b) => (a.daysLeft ?? -1e9) - (b.daysLeft ?? -1e9) || a.tag.localeCompare(b.tag));
      const technicians =
        viewer.role === 'lead' ? (await userRepository(db).list()).filter((u) => u.active && u.role === 'technician').map((u) => ({ id: u.id, name: u.name })) : [];
      return { jobs: open, needsJob, withinDays, technicians };
    },

    /**
     * As-found history per point over approved calibrations, drift per interval (as-found(k) −
     * as-left(k−1)), the predicted error at the next due date, and interval recommendations by the
     * staircase method and by the exponential reliability model beside the interval test. Errors in % of span (of flow span for rooted outputs).
     */
    async report(instrumentId: string, on?: string): Promise<DriftReport> {
      const zone = await clock.zone();
      const today = on ?? todayInZone(zone);
      const instrument = await instrumentOf(instrumentId);
      const history = await repo.approvedJobsWithRuns(instrumentId);
      const byKey = new Map<string, { p: PointResult; events: Array<CalibrationEvent & { jobId: string; revision: number; on: string }> }>();
      let calibrations = 0;
      let inTolerance = 0;
      let lastWorstFraction: number | null = null;
      const tol = instrument.tolerancePct;
      const cals: Array<{ atMs: number; worst: number }> = [];
      for (const j of history) {
        const complete = (kind: string) => j.runs.filter((r) => r.kind === kind && r.status === 'complete').at(-1);
        const found = complete('as-found');
        const foundPts = pointsOf(found);
        if (!found || !foundPts.length) continue;
        // No as-left run means the as-found was left as it stood.
        const leftPts = pointsOf(complete('as-left'));
        const left = new Map((leftPts.length ? leftPts : foundPts).map((p) => [keyOf(p), p.errorPctSpan]));
        const atMs = found.startedAt.getTime();
        calibrations++;
        const worst = Math.max(...foundPts.map((p) => Math.abs(p.errorPctSpan)));
        if (worst <= tol) inTolerance++;
        cals.push({ atMs, worst });
        for (const p of foundPts) {
          const k = keyOf(p);
          if (!byKey.has(k)) byKey.set(k, { p, events: [] });
          byKey.get(k)!.events.push({ atMs, asFound: p.errorPctSpan, asLeft: left.get(k) ?? p.errorPctSpan, jobId: j.id, revision: j.revision, on: dateInZone(found.startedAt, zone) });
        }
      }
      cals.sort((a, b) => a.atMs - b.atMs);
      if (cals.length) lastWorstFraction = cals.at(-1)!.worst / tol;
      const dueMs = instrument.nextDueOn ? Date.parse(`${instrument.nextDueOn}T00:00:00Z`) : Date.parse(`${today}T00:00:00Z`);
      const points: DriftPoint[] = [...byKey.entries()]
        .sort(([, a], [, b]) => (a.p.direction === b.p.direction ? 0 : a.p.direction === 'up' ? -1 : 1) || (a.p.direction === 'up' ? a.p.nominalPct - b.p.nominalPct : b.p.nominalPct - a.p.nominalPct))
        .map(([key, { p, events }]) => {
          events.sort((a, b) => a.atMs - b.atMs);
          const predicted = predictErrorAtDue(events, dueMs);
          return {
            key,
            nominalPct: p.nominalPct,
            basis: p.basis,
            direction: p.direction,
            events: events.map((e) => ({ jobId: e.jobId, revision: e.revision, on: e.on, atMs: e.atMs, asFound: e.asFound, asLeft: e.asLeft })),
            drifts: driftPerInterval(events).map((d) => ({
              from: dateInZone(d.fromMs, zone),
              to: dateInZone(d.toMs, zone),
              drift: d.drift,
              ratePerDay: Number.isFinite(d.ratePerDay) ? d.ratePerDay : null,
            })),
            predictedAtDue: predicted === undefined || !Number.isFinite(predicted) ? null : predicted,
          };
        });
      const predictions = points.map((p) => p.predictedAtDue).filter((v): v is number => v !== null);
      const worstPredicted = predictions.length ? predictions.reduce((a, b) => (Math.abs(b) > Math.abs(a) ? b : a)) : null;

      const recommendations: IntervalRecommendation[] = [];
      if (lastWorstFraction !== null) {
        const s = staircaseInterval({ intervalDays: instrument.intervalDays, asFoundFractionOfTolerance: lastWorstFraction, ...INTERVAL_PARAMS.staircase });
        recommendations.push({
          method: 'staircase',
          action: s.action,
          recommendedDays: Math.round(s.recommendedDays),
          basis: `Last as-found worst error was ${(lastWorstFraction * 100).toFixed(0)} % of the ±${tol} % tolerance; extend ×${INTERVAL_PARAMS.staircase.extendFactor} at or below ${INTERVAL_PARAMS.staircase.extendAtOrBelow * 100} %, shorten ×${INTERVAL_PARAMS.staircase.shortenFactor} when outside (ILAC-G24 / OIML D 10 staircase).`,
        });
      }
      if (calibrations > 0) {
        const site = await sites.settings();
        const kind = site.intervalTargetsByKind?.[instrument.outputMode];
        const target = kind?.reliabilityTarget ?? site.intervalReliabilityTarget ?? INTERVAL_PARAMS.reliability.targetReliability;
        const confidence = kind?.confidence ?? site.intervalConfidence ?? INTERVAL_PARAMS.reliability.confidence;
        const I = instrument.intervalDays;
        const a = recommendIntervals([{ intervalDays: I, inTolerance, total: calibrations }], I, target, confidence);
        const f = INTERVAL_PARAMS.reliability.maxChangeFactor;
        const { minDays, maxDays } = INTERVAL_PARAMS.staircase;
        const est = a.exponential.estimateDays ?? Infinity;
        const days = Math.round(Math.min(maxDays, Math.max(minDays, Math.min(I * f, Math.max(I / f, est)))));
        const fmt = (v: number | null) => (v === null ? 'unbounded' : `${Math.round(v)} d`);
        recommendations.push({
          method: 'reliability',
          action: days > I ? 'extend' : days < I ? 'shorten' : 'keep',
          recommendedDays: days,
          basis: `${inTolerance} of ${calibrations} as-found in tolerance. Interval test (Clopper–Pearson limits ${(a.test.lower * 100).toFixed(0)}–${(a.test.upper * 100).toFixed(0)} % at confidence ${confidence}, target ${(target * 100).toFixed(0)} %): ${a.test.verdict}. Exponential reliability model R(t) = exp(−λt), λ by maximum likelihood: ${fmt(a.exponential.estimateDays)} for the target, ${fmt(a.exponential.rangeDays[0])} to ${fmt(a.exponential.rangeDays[1])} between the confidence limits of λ; recommended within ×${f} of the current interval.`,
        });
      }
      return { instrument, unit: '% of span', tolerancePct: tol, calibrations, inTolerance, points, worstPredicted, recommendations, governing: governingOf(recommendations) };
    },

    /** A lead accepts a recommended interval; the tag's interval changes and the change is audited with its basis. */
    async acceptInterval(actor: Actor, instrumentId: string, body: { intervalDays: number; method: 'staircase' | 'reliability' }): Promise<Instrument> {
      const report = await service.report(instrumentId);
      const rec = report.recommendations.find((r) => r.method === body.method);
      if (!rec) throw badRequest('There is no recommendation by that method for this tag yet', { method: ['No recommendation'] });
      if (rec.recommendedDays !== body.intervalDays)
        throw badRequest('The recommendation has changed; reload and accept again', { intervalDays: [`The ${body.method} recommendation is now ${rec.recommendedDays} days`] });
      const before = report.instrument;
      const row = await instruments.update(instrumentId, { intervalDays: body.intervalDays });
      const after = toInstrument(row!);
      await audit.record(actor, 'instrument.interval-changed', 'instrument', instrumentId, { intervalDays: before.intervalDays }, {
        intervalDays: after.intervalDays,
        method: body.method,
        basis: rec.basis,
      });
      return after;
    },
  };
  return service;
}
export type DriftService = ReturnType<typeof createDriftService>;
