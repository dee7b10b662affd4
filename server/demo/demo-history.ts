/**
 * Past calibrations for the demo site (DESIGN.md §6): two-plus years of approved jobs on a few
 * tags, each with as-found and, where adjusted, as-left runs whose captured points come from an
 * invented drift model, so the drift and interval views have something to show. Also one job
 * waiting for review with a full raw trace. Every number here is invented for the demo.
 *
 * `recordCompletedRun` is also used by tests and the review benchmark to put a finished run (and
 * optionally its raw trace) straight into the database.
 */
import {
  buildPlan,
  convertPressure,
  cutoffOfSetting,
  evaluateCalibration,
  isPressureUnitId,
  maFromDp,
  span,
  type Cutoff,
  type DecisionRule,
  type OutputMode,
  type PlanPoint,
  type PressureUnitId,
  type TransferSpec,
} from '../../shared/calc';
import { seededRng } from '../../shared/random';
import type { Db } from '../db/client';
import { instrumentRepository, standardRepository, type InstrumentRow, type StandardRow } from '../db/repositories/register.repository';
import { reviewRepository } from '../db/repositories/review.repository';
import { userRepository } from '../db/repositories/user.repository';
import { orificeSpecOf, PrimaryElementSchema } from '../../shared/schemas/instruments';
import type { JobDetail } from '../../shared/schemas/jobs';
import { createAuditService, type AuditService } from '../services/audit.service';
import { addDays, isoDate } from '../services/dates';
import { EMPTY_CHECKLIST } from '../services/job.service';
import { createRecordFreezer, frozenRecordHash } from '../services/record-snapshot';

const DEMO_DOMAIN = 'stillpoint-demo.test';
/** The bench id run plans name (the server's own bench). */
const BENCH_ID = 'bench-1';


function cutoffOf(i: InstrumentRow): Cutoff {
  return cutoffOfSetting({ outputMode: i.outputMode as OutputMode, cutoffMode: i.cutoffMode, cutoffValue: i.cutoffValue });
}
function specOf(i: InstrumentRow): TransferSpec {
  return { range: { lrv: i.lrv, urv: i.urv, unit: i.unit as PressureUnitId }, mode: i.outputMode as OutputMode, cutoff: cutoffOf(i) };
}

/** Pressure reference spec for the calc from a standard row (floor folded into % of full scale). */
function pressureSpec(s: StandardRow) {
  const a = s.accuracy as { pctReading?: number; pctFullScale?: number; floor?: number };
  const fullScale = Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax));
  return {
    kind: 'spec' as const,
    unit: s.unit as PressureUnitId,
    pctOfReading: a.pctReading ?? 0,
    pctOfFullScale: (a.pctFullScale ?? 0) + (fullScale > 0 ? ((a.floor ?? 0) / fullScale) * 100 : 0),
    fullScale,
    resolution: s.resolution,
  };
}
function currentSpec(s: StandardRow) {
  const a = s.accuracy as { pctReading?: number; pctFullScale?: number; floor?: number };
  return { pctOfReading: a.pctReading ?? 0, floorMa: (a.floor ?? 0) + ((a.pctFullScale ?? 0) / 100) * Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax)), resolutionMa: s.resolution };
}

/** Options of {@link recordCompletedRun}. */
export interface CompletedRunSpec {
  jobId: string;
  kind: 'as-found' | 'as-left';
  instrument: InstrumentRow;
  pressureStandard: StandardRow;
  currentStandard: StandardRow;
  /** Error per planned point, % of span (of flow span for rooted outputs). Length = plan length. */
  errorsPctSpan: number[];
  startedAt: Date;
  startedBy: string;
  decisionRule?: DecisionRule;
  holdSeconds?: number;
  /** Write the raw trace too: samples at `hz` per channel (default none). */
  trace?: { hz: number; seqBase: number; approachSeconds?: number; settleSeconds?: number; seed?: number };
}

/**
 * Writes a finished run: the frozen plan (as the run service stores it), one captured point per
 * planned point with the given errors, results from shared/calc, and optionally the raw trace.
 * Returns the run id, its end time and the number of samples written.
 */
export async function recordCompletedRun(db: Db, s: CompletedRunSpec): Promise<{ runId: string; endedAt: Date; samples: number; results: unknown }> {
  const repo = reviewRepository(db);
  const i = s.instrument;
  const spec = specOf(i);
  const plan = buildPlan(spec, { kind: 'standard' });
  if (!plan.ok) throw new Error(`demo plan for ${i.tag}: ${plan.reason}`);
  const pts: PlanPoint[] = plan.value;
  const hold = s.holdSeconds ?? 30;
  const dpSpan = Math.abs(span(spec.range));
  const rand = seededRng(s.trace?.seed ?? Math.floor(s.startedAt.getTime() / 1000));
  const gauss = () => {
    const u = Math.max(rand(), 1e-12);
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
  };
  const approach = s.trace?.approachSeconds ?? 25;
  const settle = s.trace?.settleSeconds ?? 12;
  const perPoint = approach + settle + hold;
  const t0 = s.startedAt.getTime();
  const dpNoise = dpSpan * 0.00004;
  const maNoise = 0.0004;

  const captured = pts.map((p, k) => {
    const appliedDp = p.targetDp + (rand() - 0.5) * p.window * 0.4;
    const err = s.errorsPctSpan[k] ?? 0;
    const measuredMa = maFromDp(spec, appliedDp) + (err / 100) * 16;
    const holdStart = t0 + (k * perPoint + approach + settle) * 1000;
    return {
      p,
      capture: {
        appliedDp,
        appliedDpSd: dpNoise,
        measuredMa,
        measuredMaSd: maNoise,
        n: hold * (s.trace?.hz ?? 10),
        startMs: holdStart,
        endMs: holdStart + hold * 1000,
        leakRatePctSpanPerMin: 0.002 + rand() * 0.004,
        manualReason: null,
        capturedBy: null,
      },
    };
  });
  const endedAt = new Date(t0 + pts.length * perPoint * 1000 + 2000);
  const decisionRule = s.decisionRule ?? 'guard-band';
  const evaluated = evaluateCalibration({
    instrument: {
      lrv: i.lrv,
      urv: i.urv,
      unit: i.unit as PressureUnitId,
      outputMode: i.outputMode as OutputMode,
      cutoffMode: i.cutoffMode,
      cutoffValue: i.cutoffValue,
      tolerancePctSpan: i.tolerancePct,
      // Flow in engineering units for a tag with an orifice, as a live run evaluates it.
      primaryElement: primaryElementOf(i.primaryElement),
    },
    standards: { pressure: pressureSpec(s.pressureStandard), current: currentSpec(s.currentStandard) },
    decisionRule,
    readings: captured.map(({ p, capture }) => ({
      nominalPct: p.nominalPct,
      basis: p.basis,
      direction: p.approach,
      appliedDp: capture.appliedDp,
      measuredMa: capture.measuredMa,
      appliedDpSd: capture.appliedDpSd,
      measuredMaSd: capture.measuredMaSd,
      n: capture.n,
    })),
  });
  const results = evaluated.ok ? evaluated.value : null;
  const run = await repo.insertRun(
    {
      jobId: s.jobId,
      kind: s.kind,
      status: 'complete',
      plan: {
        benchId: BENCH_ID,
        trim: null,
        unit: i.unit,
        holdSeconds: hold,
        windowPctOfSpan: 0.5,
        decisionRule,
        instrument: { id: i.id, tag: i.tag, lrv: i.lrv, urv: i.urv, unit: i.unit, outputMode: i.outputMode, cutoffMode: i.cutoffMode, cutoffValue: i.cutoffValue, tolerancePct: i.tolerancePct },
        standardIds: [s.pressureStandard.id, s.currentStandard.id],
        points: pts,
        warnings: [],
      },
      results,
      startedBy: s.startedBy,
      startedAt: s.startedAt,
      endedAt,
    },
    captured.map(({ p, capture }) => ({ index: p.index, state: 'captured', flags: [], capture, reason: null, updatedAt: new Date(capture.endMs) })),
  );

  let written = 0;
  if (s.trace) {
    const { hz, seqBase } = s.trace;
    const dt = 1000 / hz;
    const rows: Array<Parameters<typeof repo.insertSamples>[0][number]> = [];
    let seq = seqBase;
    let prevDp = pts[0]!.approach === 'up' ? spec.range.lrv : spec.range.urv;
    for (const [k, { p, capture }] of captured.entries()) {
      const start = t0 + k * perPoint * 1000;
      const n = Math.round(perPoint * hz);
      const err = s.errorsPctSpan[k] ?? 0;
      for (let j = 0; j < n; j++) {
        const t = start + j * dt;
        const secs = j / hz;
        // Approach on a smooth ramp, a small overshoot-free creep while settling, then the hold.
        const frac = Math.min(1, secs / approach);
        const eased = frac < 1 ? 1 - (1 - frac) ** 3 : 1;
        const settleOffset = secs > approach && secs < approach + settle ? (capture.appliedDp - prevDp) * 0.002 * (1 - (secs - approach) / settle) : 0;
        const dp = prevDp + (capture.appliedDp - prevDp) * eased + settleOffset + gauss() * dpNoise;
        const ma = maFromDp(spec, dp) + (err / 100) * 16 + gauss() * maNoise;
        rows.push({ seq: seq++, benchId: BENCH_ID, device: 'pressure', runId: run.id, raw: dp.toFixed(5), value: dp, unit: i.unit, wallMs: t, monoMs: t - t0 });
        rows.push({ seq: seq++, benchId: BENCH_ID, device: 'current', runId: run.id, raw: (ma / 1000).toExponential(6), value: ma, unit: 'mA', wallMs: t + dt / 2, monoMs: t + dt / 2 - t0 });
      }
      prevDp = capture.appliedDp;
      void p;
    }
    await repo.insertSamples(rows);
    written = rows.length;
  }
  return { runId: run.id, endedAt, samples: written, results };
}

/** Tags given a history, with their invented drift (zero and span shift per year, % of span). */
const HISTORY: Array<{ tag: string; zeroPerYear: number; spanPerYear: number; noise: number; seed: number }> = [
  { tag: 'FT-101', zeroPerYear: 0.18, spanPerYear: 0.22, noise: 0.03, seed: 101 },
  { tag: 'FT-103', zeroPerYear: -0.12, spanPerYear: 0.31, noise: 0.04, seed: 103 },
  { tag: 'PT-104', zeroPerYear: 0.05, spanPerYear: -0.08, noise: 0.02, seed: 104 },
  { tag: 'FT-301', zeroPerYear: 0.35, spanPerYear: 0.4, noise: 0.05, seed: 301 },
];

/**
 * Seeds the demo's calibration history (call once, after the demo users, instruments and
 * standards exist): for each tag in HISTORY, approved past jobs every interval back over at least
 * two years, ending at the instrument's `lastCalibratedOn`, each with an as-found run, an as-left
 * run when it was adjusted, and the lead's signature; plus one submitted job on PT-302 awaiting
 * review whose runs carry a raw trace (10 readings/s per channel), when `withTraces` (default true).
 * Call it from the demo seed after the users, instruments and standards exist and before the bench starts.
 * Returns what it wrote. Does nothing for a tag that already has approved jobs.
 */
export async function seedDemoHistory(
  db: Db,
  opts: {
    audit?: AuditService;
    now?: Date;
    withTraces?: boolean;
    /**
     * First sequence number for the trace samples. Default: after the highest stored, which is right
     * when called before the bench hub starts (the hub continues after the stored maximum). A caller
     * seeding while a hub runs passes a base far above the hub's counter.
     */
    traceSeqBase?: number;
  } = {},
): Promise<{ jobs: number; runs: number; samples: number; tags: string[] }> {
  const now = opts.now ?? new Date();
  const today = isoDate(now);
  const repo = reviewRepository(db);
  const freezer = createRecordFreezer(db, opts.audit ?? createAuditService(db));
  /** Freezes revision 1 of a demo job as a submission would, by its performer; returns the record hash. */
  const freeze = async (detail: JobDetail, by: { id: string; name: string }, at: Date): Promise<string> => {
    const record = await freezer.build(detail, by, at);
    const hash = frozenRecordHash(record);
    await repo.saveSnapshot({ jobId: detail.id, revision: 1, snapshot: record, hash, frozenAt: at });
    return hash;
  };
  const users = userRepository(db);
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const tech = await users.findByEmail(`tech@${DEMO_DOMAIN}`);
  const tech2 = await users.findByEmail(`tech2@${DEMO_DOMAIN}`);
  const lead = await users.findByEmail(`lead@${DEMO_DOMAIN}`);
  if (!tech || !lead) return { jobs: 0, runs: 0, samples: 0, tags: [] };
  const all = await standards.all();
  const pressures = all.filter((s) => s.kind === 'pressure').sort((a, b) => b.dueOn.localeCompare(a.dueOn));
  const pressureStd = pressures[0];
  /** The in-date pressure standard whose range covers the instrument, else the newest. */
  const pressureFor = (i: InstrumentRow) =>
    pressures.find((s) => {
      if (!isPressureUnitId(s.unit) || !isPressureUnitId(i.unit)) return false;
      const hi = convertPressure(Math.max(i.lrv, i.urv), i.unit, s.unit);
      const lo = convertPressure(Math.min(i.lrv, i.urv), i.unit, s.unit);
      return s.dueOn >= today && hi <= s.rangeMax && lo >= s.rangeMin;
    }) ?? pressureStd!;
  const currentStd = all.filter((s) => s.kind === 'current').sort((a, b) => b.dueOn.localeCompare(a.dueOn))[0];
  if (!pressureStd || !currentStd) return { jobs: 0, runs: 0, samples: 0, tags: [] };

  let jobsWritten = 0;
  let runsWritten = 0;
  let samplesWritten = 0;
  const tags: string[] = [];
  for (const h of HISTORY) {
    const inst = await instruments.findByTag(h.tag);
    if (!inst?.lastCalibratedOn) continue;
    if ((await repo.approvedJobsWithRuns(inst.id)).length) continue;
    tags.push(h.tag);
    const rand = seededRng(h.seed);
    const pStd = pressureFor(inst);
    const count = Math.min(7, Math.ceil(1095 / inst.intervalDays) + 1);
    const dates = Array.from({ length: count }, (_, k) => addDays(inst.lastCalibratedOn!, -(count - 1 - k) * inst.intervalDays));
    let zeroLeft = 0.02;
    let spanLeft = -0.01;
    for (const [k, on] of dates.entries()) {
      const years = k === 0 ? inst.intervalDays / 365 : (Date.parse(on) - Date.parse(dates[k - 1]!)) / (365 * 86_400_000);
      const zeroFound = zeroLeft + h.zeroPerYear * years * (0.7 + rand() * 0.6);
      const spanFound = spanLeft + h.spanPerYear * years * (0.7 + rand() * 0.6);
      const plan = buildPlan(specOf(inst), { kind: 'standard' });
      if (!plan.ok) break;
      const nominal = (p: PlanPoint) => p.dpPct / 100;
      const found = plan.value.map((p) => zeroFound + spanFound * nominal(p) + (rand() - 0.5) * 2 * h.noise + (p.approach === 'down' ? 0.015 : 0));
      const worst = Math.max(...found.map(Math.abs));
      const adjusted = worst > inst.tolerancePct * 0.5;
      const assignee = h.tag === 'FT-301' && tech2 ? tech2 : tech;
      const startedAt = new Date(`${on}T08:30:00Z`);
      const job = await repo.insertJob({
        instrumentId: inst.id,
        status: 'approved',
        assigneeId: assignee.id,
        createdBy: lead.id,
        dueOn: on,
        permitNo: `PTW-${on.slice(2, 4)}${String(100 + k * 7 + (h.seed % 50)).padStart(4, '0')}`,
        checklist: demoChecklist(pStd.id, currentStd.id, assignee, startedAt),
        notes: adjusted ? 'Found drifting; trimmed and retested.' : '',
        revision: 1,
        createdAt: new Date(startedAt.getTime() - 14 * 86_400_000),
        updatedAt: new Date(startedAt.getTime() + 2 * 86_400_000),
      });
      const asFound = await recordCompletedRun(db, { jobId: job.id, kind: 'as-found', instrument: inst, pressureStandard: pStd, currentStandard: currentStd, errorsPctSpan: found, startedAt, startedBy: assignee.id });
      runsWritten++;
      if (adjusted) {
        zeroLeft = (rand() - 0.5) * 0.04;
        spanLeft = (rand() - 0.5) * 0.04;
        const left = plan.value.map((p) => zeroLeft + spanLeft * nominal(p) + (rand() - 0.5) * 0.02);
        await recordCompletedRun(db, { jobId: job.id, kind: 'as-left', instrument: inst, pressureStandard: pStd, currentStandard: currentStd, errorsPctSpan: left, startedAt: new Date(asFound.endedAt.getTime() + 40 * 60_000), startedBy: assignee.id });
        runsWritten++;
      } else {
        zeroLeft = zeroFound;
        spanLeft = spanFound;
      }
      // Frozen as the lead signed it (the same record and hash a real submission and signature make).
      const signedAt = new Date(startedAt.getTime() + 2 * 86_400_000);
      const detail = demoJobDetail(job, inst, assignee);
      const hash = await freeze(detail, { id: assignee.id, name: assignee.name }, new Date(startedAt.getTime() + 86_400_000));
      await repo.insertSignature({
        jobId: job.id,
        revision: 1,
        decision: 'approve',
        meaning: 'reviewed and approved',
        comment: '',
        signerId: lead.id,
        signerName: lead.name,
        signerEmail: lead.email,
        signedAt,
        recordHash: hash,
      });
      jobsWritten++;
    }
  }

  // One job waiting for review, with its raw trace.
  const pending = await instruments.findByTag('PT-302');
  if (pending && (opts.withTraces ?? true) && !(await repo.records({ status: 'submitted' })).some((r) => r.instrumentId === pending.id)) {
    const startedAt = new Date(now.getTime() - 3 * 86_400_000);
    startedAt.setUTCHours(9, 0, 0, 0);
    const job = await repo.insertJob({
      instrumentId: pending.id,
      status: 'submitted',
      assigneeId: tech.id,
      createdBy: lead.id,
      dueOn: addDays(today, 5),
      permitNo: 'PTW-D0417',
      checklist: { ...demoChecklist(pressureFor(pending).id, currentStd.id, tech, startedAt), returnedToService: stamp(tech, new Date(startedAt.getTime() + 4 * 3600_000)) },
      notes: 'Transmitter replaced after a lightning strike on the air-ring header; calibrated before first use.',
      revision: 1,
    });
    const base = opts.traceSeqBase ?? (await repo.maxSampleSeq()) + 1;
    const found = [0.04, 0.09, 0.16, 0.22, 0.31, 0.27, 0.18, 0.11, 0.06];
    const af = await recordCompletedRun(db, { jobId: job.id, kind: 'as-found', instrument: pending, pressureStandard: pressureFor(pending), currentStandard: currentStd, errorsPctSpan: found, startedAt, startedBy: tech.id, trace: { hz: 10, seqBase: base, seed: 302 } });
    const al = await recordCompletedRun(db, { jobId: job.id, kind: 'as-left', instrument: pending, pressureStandard: pressureFor(pending), currentStandard: currentStd, errorsPctSpan: [0.01, -0.02, 0.0, 0.02, 0.01, 0.02, 0.0, -0.01, 0.01], startedAt: new Date(af.endedAt.getTime() + 30 * 60_000), startedBy: tech.id, trace: { hz: 10, seqBase: base + af.samples + 10, seed: 303 } });
    samplesWritten += af.samples + al.samples;
    runsWritten += 2;
    // Submitted: frozen at submission, as the review expects.
    const submittedAt = new Date(al.endedAt.getTime() + 60 * 60_000);
    await freeze(
      demoJobDetail(job, pending, tech),
      { id: tech.id, name: tech.name },
      submittedAt,
    );
    jobsWritten++;
  }
  await opts.audit?.record(null, 'demo.history-seeded', 'site', null, undefined, { jobs: jobsWritten, runs: runsWritten, samples: samplesWritten, tags });
  return { jobs: jobsWritten, runs: runsWritten, samples: samplesWritten, tags };
}

function stamp(u: { id: string; name: string }, at: Date) {
  return { by: u.id, byName: u.name, at: at.toISOString() };
}

function demoChecklist(pressureId: string, currentId: string, who: { id: string; name: string }, at: Date, permitNo = 'on file') {
  const s = stamp(who, new Date(at.getTime() - 20 * 60_000));
  return {
    ...EMPTY_CHECKLIST,
    standardIds: [pressureId, currentId],
    permitNo,
    operatorsInformed: s,
    isolated: s,
    vented: s,
    returnedToService: stamp(who, new Date(at.getTime() + 3 * 3600_000)),
  };
}

/** The orifice spec of an instrument's stored primary element, or null (none, or not an orifice). */
function primaryElementOf(stored: unknown): ReturnType<typeof orificeSpecOf> | null {
  const pe = PrimaryElementSchema.nullable().catch(null).parse(stored ?? null);
  return pe ? (orificeSpecOf(pe) ?? null) : null;
}

/** A demo job as the job service details it when it is submitted (what the frozen record is built from). */
function demoJobDetail(
  job: { id: string; dueOn: string; permitNo: string | null; notes: string; createdAt: Date; updatedAt: Date; checklist: unknown },
  inst: { id: string; tag: string },
  assignee: { id: string; name: string },
): JobDetail {
  return {
    id: job.id,
    instrumentId: inst.id,
    tag: inst.tag,
    status: 'submitted',
    assigneeId: assignee.id,
    assigneeName: assignee.name,
    dueOn: job.dueOn,
    overdue: false,
    permitNo: job.permitNo,
    notes: job.notes,
    revision: 1,
    createdAt: job.createdAt.toISOString(),
    updatedAt: job.updatedAt.toISOString(),
    checklist: job.checklist as JobDetail['checklist'],
    standards: [],
    runs: [],
    blockers: [],
    submitBlockers: [],
  };
}
