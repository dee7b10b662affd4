/**
 * Runs: start (plan and settings frozen into the run), the capture path (each bench's capture
 * engine raises run events → this service stores what they change: point states, flags, captures
 * with their audit event, run status → only then the hub numbers and publishes them to the stream),
 * commands (manual capture, redo, pause, resume, abort), results from shared/calc and the raw trace.
 * What `GET /api/runs/:id` says of points and status is read from the database, so it never shows
 * a capture that is not stored; the current index and warnings come from the events published so far.
 */
import type { Logger } from 'pino';
import {
  buildPlan,
  checkOutputMode,
  DECISION_RULES,
  evaluateCalibration,
  isPressureUnitId,
  span,
  trimPlan,
  type CurrentMeterSpec,
  type Cutoff,
  type DecisionRule,
  type EvaluateOutput,
  type OutputMode,
  type PlanPoint,
  type PressureReferenceSpec,
  type PressureUnitId,
  type TransferSpec,
} from '../../shared/calc';
import type { JobDetail } from '../../shared/schemas/jobs';
import type { PointCapture, PointFlag, PointState, Run, RunKind, RunPoint, StartRunBody } from '../../shared/schemas/runs';
import { DEFAULT_OVERRANGE_MARGIN_PCT, type SiteSettings } from '../../shared/schemas/settings';
import type { RunEvent } from '../../shared/schemas/stream';
import { EngineRefusal, type EngineRunSettings } from '../bench/capture-run';
import { CaptureEngines } from '../bench/capture-engines';
import type { BenchHub } from '../bench/hub';
import type { SimRunContext } from '../bench/sim-control';
import { orificeSpecOf, PrimaryElementSchema, type PrimaryElement } from '../../shared/schemas/instruments';
import type { Db } from '../db/client';
import { instrumentRepository, jobRepository, standardRepository, type InstrumentRow, type StandardRow } from '../db/repositories/register.repository';
import { runRepository, type RunRepository, type RunRow } from '../db/repositories/run.repository';
import { sampleRepository } from '../db/repositories/sample.repository';
import { siteRepository, userRepository } from '../db/repositories/user.repository';
import { AppError, badRequest, conflict, forbidden, locked, notFound } from '../errors';
import type { Actor, AuditService } from './audit.service';
import { DEFAULT_BENCH_ID } from './bench.service';
import type { SessionUser } from './auth.service';

/** What the run service needs of the job service: `detail(id)` with `blockers` (see JobDetailSchema). */
export interface JobDetailSource {
  detail: (id: string) => Promise<JobDetail>;
}

/** Frozen at start, stored in `runs.plan`. */
interface FrozenPlan {
  benchId: string;
  trim: string | null;
  unit: string;
  holdSeconds: number;
  windowPctOfSpan: number;
  decisionRule: DecisionRule;
  instrument: {
    id: string;
    tag: string;
    lrv: number;
    urv: number;
    unit: string;
    outputMode: OutputMode;
    cutoffMode: 'none' | 'clamp' | 'linear';
    cutoffValue: number;
    tolerancePct: number;
    /** Orifice primary element as registered at start (parsed with PrimaryElementSchema); absent on older runs. */
    primaryElement?: PrimaryElement | null;
  };
  standardIds: string[];
  points: PlanPoint[];
  warnings: string[];
  /** Coverage and decision settings frozen at start (site settings); absent on older runs (defaults). */
  coverage?: { coverageProbability?: number; coverageFactor?: number; minimumTur?: number };
  /** The technician who started the run (absent on runs started before it was recorded: see `runs.started_by`). */
  performer?: { id: string; email: string };
  /** Over-range warning margin above the URV, % of span (site setting frozen at start); absent on older runs (default). */
  overrangeMarginPct?: number;
}

/** What the run service is given by the composition root. */
export interface RunServiceDeps {
  audit: AuditService;
  jobs: JobDetailSource;
  /** The hub that numbers and publishes run events once they are stored. */
  hub: BenchHub;
  /** Run and point storage (default over `db`; the composition root may wrap it). */
  runs?: RunRepository;
}

/** What the published run events say that is not stored: the current point and the points' latest warnings (live values). */
interface PublishedView {
  currentIndex: number | null;
  warnings: Map<number, string | null>;
}

export interface RunServiceOptions {
  /** HOLD_SECONDS from the environment; wins over the site setting when it differs from the default 30 s. */
  envHoldSeconds: number;
  logger: Logger;
  /** Whether a user may start a run on a bench (this server's, an active agent's, their own browser bench); default any. */
  mayRunOn?: (benchId: string, actor: { id: string }) => boolean;
}

const DEFAULT_HOLD_SECONDS = 30;

function cutoffOf(i: FrozenPlan['instrument']): Cutoff {
  if (i.outputMode === 'linear' || i.cutoffMode === 'none' || !(i.cutoffValue > 0)) return { mode: 'none' };
  return i.cutoffMode === 'clamp' ? { mode: 'clamp', flowPct: i.cutoffValue } : { mode: 'linear', breakpointDpPct: i.cutoffValue };
}

function specOf(i: FrozenPlan['instrument']): TransferSpec {
  return { range: { lrv: i.lrv, urv: i.urv, unit: i.unit as PressureUnitId }, mode: i.outputMode, cutoff: cutoffOf(i) };
}

/** A pressure standard's accuracy as the calc's reference spec; a floor (standard's unit) is folded into % of full scale. */
export function pressureSpecOf(s: StandardRow): PressureReferenceSpec | string {
  if (!isPressureUnitId(s.unit)) return `standard ${s.serial}: unit '${s.unit}' is not a pressure unit`;
  const a = s.accuracy as { pctReading?: number; pctFullScale?: number; floor?: number; certificateU?: number | null; certificateK?: number | null };
  if (a.certificateU != null && a.certificateK != null && a.certificateK > 0) {
    return { kind: 'certificate', unit: s.unit, expandedU: a.certificateU, k: a.certificateK, resolution: s.resolution };
  }
  const fullScale = Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax));
  const floorPct = fullScale > 0 ? ((a.floor ?? 0) / fullScale) * 100 : 0;
  return { kind: 'spec', unit: s.unit, pctOfReading: a.pctReading ?? 0, pctOfFullScale: (a.pctFullScale ?? 0) + floorPct, fullScale, resolution: s.resolution };
}

/** A current standard's accuracy as the calc's meter spec (% of full scale and a certificate U/k become an equivalent floor). */
export function currentSpecOf(s: StandardRow): CurrentMeterSpec {
  const a = s.accuracy as { pctReading?: number; pctFullScale?: number; floor?: number; certificateU?: number | null; certificateK?: number | null };
  const fullScale = Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax));
  if (a.certificateU != null && a.certificateK != null && a.certificateK > 0) {
    // Rectangular half-width with the same standard uncertainty as U/k: a = √3·U/k.
    return { pctOfReading: 0, floorMa: (Math.sqrt(3) * a.certificateU) / a.certificateK, resolutionMa: s.resolution };
  }
  return { pctOfReading: a.pctReading ?? 0, floorMa: (a.floor ?? 0) + ((a.pctFullScale ?? 0) / 100) * fullScale, resolutionMa: s.resolution };
}

export function createRunService(db: Db, deps: RunServiceDeps, o: RunServiceOptions) {
  const { audit, hub } = deps;
  const jobsSource = deps.jobs;
  const runsRepo = deps.runs ?? runRepository(db);
  const samples = sampleRepository(db);
  const jobsRepo = jobRepository(db);
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const sites = siteRepository(db);
  const users = userRepository(db);
  /** Frozen plans of runs loaded in an engine. */
  const loaded = new Map<string, FrozenPlan>();
  /** Per run, what the published events say beyond the stored rows. */
  const published = new Map<string, PublishedView>();
  /** State and flags last stored per point (`runId/index`), so repeated hold progress costs no write. */
  const storedPoint = new Map<string, string>();
  /** The capture path, one event at a time in the engines' order: store, then publish. */
  let chain: Promise<void> = Promise.resolve();
  const engines = new CaptureEngines(hub, (_benchId, e) => {
    chain = chain.then(() => commit(e)).catch((err: unknown) => o.logger.error({ err, runId: e.runId, event: e.type }, 'storing a run event failed; it was not published'));
  });

  /** Stores what an event changes, then has the hub number and publish it. */
  async function commit(e: RunEvent): Promise<void> {
    await store(e);
    hub.publish(e);
    const v = published.get(e.runId) ?? { currentIndex: null, warnings: new Map<number, string | null>() };
    published.set(e.runId, v);
    if (e.type === 'run.changed') v.currentIndex = e.currentIndex;
    else if (e.type === 'point.changed' && e.warning !== undefined) v.warnings.set(e.index, e.warning);
  }

  async function store(e: RunEvent): Promise<void> {
    switch (e.type) {
      case 'point.changed': {
        const key = `${e.runId}/${e.index}`;
        const value = JSON.stringify([e.state, e.flags]);
        if (storedPoint.get(key) === value) return;
        // 'captured' is stored only with its capture (point.captured, just before); if that write
        // failed, this change is neither stored nor shown.
        if (e.state === 'captured') throw new Error(`point ${e.index} of run ${e.runId} is not stored as captured; its capture was not stored`);
        // A point that is not captured holds no capture (a redo clears it).
        await runsRepo.updatePoint(e.runId, e.index, { state: e.state, flags: e.flags, capture: null, reason: null });
        storedPoint.set(key, value);
        return;
      }
      case 'point.captured': {
        const by = e.capture.by;
        // The capture and its audit event commit together (one transaction).
        const auditIn = (tx: Db) => {
          if (e.manual && by?.kind === 'user') {
            return audit.record(by.user, 'run.point-captured-manually', 'run', e.runId, undefined, { index: e.index, reason: e.capture.manualReason, flags: e.flags, capture: e.capture, by }, tx);
          }
          // Hands-free: the bench captured it after the hold, for the run's performer, from the samples' sources.
          const performer = by?.kind === 'bench' && by.performer ? `; run performed by ${by.performer.email}` : '';
          return audit.record({ nonUser: `bench ${e.benchId} (hands-free capture${performer})` }, 'run.point-captured', 'run', e.runId, undefined, { index: e.index, flags: e.flags, capture: e.capture, by }, tx);
        };
        await runsRepo.updatePoint(e.runId, e.index, { state: 'captured', flags: e.flags, capture: e.capture, reason: e.capture.manualReason }, auditIn);
        storedPoint.set(`${e.runId}/${e.index}`, JSON.stringify(['captured', e.flags]));
        return;
      }
      case 'run.changed': {
        const ended = e.status === 'complete' || e.status === 'aborted';
        if (!ended) {
          await runsRepo.update(e.runId, { status: e.status });
          return;
        }
        const row = await runsRepo.get(e.runId);
        const results = row ? (await computeResults(row)).results : null;
        await runsRepo.update(e.runId, { status: e.status, endedAt: new Date(), results });
        await audit.record(null, `run.${e.status === 'complete' ? 'completed' : 'aborted'}`, 'run', e.runId, undefined, { status: e.status });
        for (const key of storedPoint.keys()) if (key.startsWith(`${e.runId}/`)) storedPoint.delete(key);
        return;
      }
      case 'run.warned':
        // A sender's implausible clock is flagged on the run's record, not only shown live.
        if (e.kind === 'clock') await audit.record(null, 'run.clock-flagged', 'run', e.runId, undefined, { index: e.index, message: e.message });
        return;
    }
  }

  async function siteSettings(): Promise<SiteSettings> {
    return sites.settings();
  }

  async function jobFacts(jobId: string): Promise<{ assigneeId: string | null; status: string; instrumentId: string; standardIds: string[]; blockers: string[] }> {
    const d = await jobsSource.detail(jobId);
    return { assigneeId: d.assigneeId, status: d.status, instrumentId: d.instrumentId, standardIds: d.checklist.standardIds, blockers: d.blockers };
  }

  function planFor(kind: RunKind, trim: StartRunBody['trim'], inst: FrozenPlan['instrument'], windowPctOfSpan: number): { points: PlanPoint[]; warnings: string[] } {
    const spec = specOf(inst);
    if (kind === 'mode-check') {
      const r = buildPlan(spec, { kind: 'custom', points: [{ nominalPct: 25, basis: 'dp', approach: 'up' }], windowPctOfSpan });
      if (!r.ok) throw badRequest(`Cannot plan the mode check: ${r.reason}`);
      return { points: r.value, warnings: [] };
    }
    if (kind === 'trim') {
      const t = trimPlan(spec);
      const steps = trim ? t.steps.filter((s) => s.kind === trim) : t.steps;
      if (!steps.length) throw badRequest(`A ${trim} does not apply to a ${inst.outputMode} output; use ${t.steps.map((s) => s.kind).join(' and ')}`);
      const r = buildPlan(spec, { kind: 'custom', points: steps.map((s) => ({ nominalPct: s.dpPct, basis: 'dp' as const, approach: 'up' as const })), windowPctOfSpan });
      if (!r.ok) throw badRequest(`Cannot plan the trim: ${r.reason}`);
      return { points: r.value, warnings: t.warnings };
    }
    const r = buildPlan(spec, { kind: 'standard', windowPctOfSpan });
    if (!r.ok) throw badRequest(`Cannot plan the run: ${r.reason}`);
    return { points: r.value, warnings: [] };
  }

  function engineSettings(row: RunRow, p: FrozenPlan, performer: { id: string; email: string } | null): EngineRunSettings {
    const dpSpan = Math.abs(span(specOf(p.instrument).range));
    const overrangeAbove = Math.max(p.instrument.lrv, p.instrument.urv) + ((p.overrangeMarginPct ?? DEFAULT_OVERRANGE_MARGIN_PCT) / 100) * dpSpan;
    return { runId: row.id, benchId: p.benchId, unit: p.unit, dpSpan, holdSeconds: p.holdSeconds, performer, overrangeAbove };
  }

  /** The run's performer: frozen in the plan, or (older runs) the user who started it. */
  async function performerOf(row: RunRow, p: FrozenPlan): Promise<{ id: string; email: string } | null> {
    if (p.performer) return p.performer;
    const u = row.startedBy ? await users.findById(row.startedBy) : undefined;
    return u ? { id: u.id, email: u.email } : null;
  }

  async function computeResults(row: RunRow): Promise<{ results: EvaluateOutput | null; problem: string | null; modeCheck: Run['modeCheck'] }> {
    const p = row.plan as FrozenPlan;
    const pts = await currentPoints(row);
    const captured = pts.filter((x) => x.capture);
    if (!captured.length) return { results: null, problem: null, modeCheck: null };
    let modeCheck: Run['modeCheck'] = null;
    if (row.kind === 'mode-check') {
      const ma = captured[0]!.capture!.measuredMa;
      const finding = checkOutputMode(ma).decision;
      const matches = finding === 'root-in-transmitter' ? p.instrument.outputMode === 'sqrt-transmitter' : finding === 'linear-output' ? p.instrument.outputMode !== 'sqrt-transmitter' : false;
      modeCheck = { measuredMa: ma, finding, matchesRegister: matches };
    }
    // A finished run answers with the results stored when it completed — the ones a submission
    // freezes into the record — so a later edit of a standard does not change what the API says.
    const live = engines.activeRunId(p.benchId) === row.id;
    if (row.status === 'complete' && !live && row.results) return { results: row.results as EvaluateOutput, problem: null, modeCheck };
    const chosen = (await Promise.all(p.standardIds.map((id) => standards.get(id)))).filter((s): s is StandardRow => !!s);
    const ps = chosen.find((s) => s.kind === 'pressure');
    const cs = chosen.find((s) => s.kind === 'current');
    if (!ps || !cs) return { results: null, problem: 'Choose a pressure and a current standard for the job to compute uncertainty and a decision', modeCheck };
    const pressure = pressureSpecOf(ps);
    if (typeof pressure === 'string') return { results: null, problem: pressure, modeCheck };
    const r = evaluateCalibration({
      instrument: {
        lrv: p.instrument.lrv,
        urv: p.instrument.urv,
        unit: p.instrument.unit as PressureUnitId,
        outputMode: p.instrument.outputMode,
        cutoffMode: p.instrument.cutoffMode,
        cutoffValue: p.instrument.cutoffValue,
        tolerancePctSpan: p.instrument.tolerancePct,
        primaryElement: p.instrument.primaryElement ? (orificeSpecOf(p.instrument.primaryElement) ?? null) : null,
      },
      standards: { pressure, current: currentSpecOf(cs) },
      decisionRule: p.decisionRule,
      coverageProbability: p.coverage?.coverageProbability,
      coverageFactor: p.coverage?.coverageFactor,
      minimumTur: p.coverage?.minimumTur,
      readings: captured.map((x) => ({
        nominalPct: x.nominalPct,
        basis: x.basis,
        direction: x.approach,
        appliedDp: x.capture!.appliedDp,
        measuredMa: x.capture!.measuredMa,
        appliedDpSd: x.capture!.appliedDpSd,
        measuredMaSd: x.capture!.measuredMaSd,
        n: x.capture!.n,
        typeA: x.capture!.typeA ? { uMa: x.capture!.typeA.uMa, dof: x.capture!.typeA.dof } : null,
      })),
    });
    return r.ok ? { results: r.value, problem: null, modeCheck } : { results: null, problem: r.reason, modeCheck };
  }

  /**
   * Points of a run as stored (never the engine's memory, which may be ahead of the database);
   * the warning text is the latest one published.
   */
  async function currentPoints(row: RunRow): Promise<RunPoint[]> {
    const p = row.plan as FrozenPlan;
    const rows = await runsRepo.points(row.id);
    const warnings = published.get(row.id)?.warnings;
    return p.points.map((pp, i) => {
      const r = rows[i];
      return {
        ...planFields(pp),
        state: (r?.state ?? 'waiting') as PointState,
        flags: (r?.flags ?? []) as PointFlag[],
        capture: (r?.capture ?? null) as PointCapture | null,
        warning: warnings?.get(pp.index) ?? null,
      };
    });
  }

  function planFields(pp: PlanPoint) {
    return { index: pp.index, nominalPct: pp.nominalPct, basis: pp.basis, dpPct: pp.dpPct, targetDp: pp.targetDp, expectedMa: pp.expectedMa, approach: pp.approach, window: pp.window };
  }

  async function toRun(row: RunRow): Promise<Run> {
    const p = row.plan as FrozenPlan;
    const points = await currentPoints(row);
    const { results, problem, modeCheck } = await computeResults(row);
    const active = row.status === 'running' || row.status === 'paused';
    return {
      id: row.id,
      jobId: row.jobId,
      kind: row.kind,
      trim: p.trim,
      status: row.status,
      unit: p.unit,
      holdSeconds: p.holdSeconds,
      currentIndex: active ? (published.get(row.id)?.currentIndex ?? null) : null,
      points,
      results,
      modeCheck,
      startedAt: row.startedAt.toISOString(),
      endedAt: row.endedAt ? row.endedAt.toISOString() : null,
      benchId: p.benchId,
      resultsProblem: problem,
    };
  }

  async function loadRun(id: string): Promise<RunRow> {
    const row = await runsRepo.get(id);
    if (!row) throw notFound('No such run');
    return row;
  }

  async function mustPerform(actor: SessionUser, row: RunRow): Promise<void> {
    const job = await jobsRepo.get(row.jobId);
    if (!job || job.assigneeId !== actor.id) throw forbidden('Only the technician assigned to this job may operate its runs');
    // Records are locked once approved (or under review): a correction is a new revision.
    if (job.status === 'approved' || job.status === 'submitted') throw locked(`The job is ${job.status}; its runs can no longer change`);
  }

  /** The engine holding this run, loading a stored run into it when asked to (redo of a finished run). */
  function engineOf(row: RunRow) {
    const p = row.plan as FrozenPlan;
    const engine = engines.get(p.benchId);
    const snap = engine.snapshot();
    if (!snap || snap.runId !== row.id) throw conflict(`The run is ${row.status} and not loaded on ${p.benchId}`);
    return engine;
  }

  function refusal<T>(fn: () => T): T {
    try {
      return fn();
    } catch (e) {
      if (e instanceof EngineRefusal) throw new AppError(e.status, e.status === 404 ? 'not_found' : 'conflict', e.message);
      throw e;
    }
  }

  async function restore(row: RunRow): Promise<void> {
    const p = row.plan as FrozenPlan;
    const rows = await runsRepo.points(row.id);
    loaded.set(row.id, p);
    for (const r of rows) storedPoint.set(`${row.id}/${r.index}`, JSON.stringify([r.state, r.flags]));
    engines.get(p.benchId).start(engineSettings(row, p, await performerOf(row, p)), p.points, {
      status: row.status === 'paused' ? 'paused' : 'running',
      points: rows.map((r) => ({ state: r.state as PointState, flags: r.flags as PointFlag[], capture: r.capture as PointCapture | null })),
    });
  }

  return {
    /** The capture engines of every bench (the bench service feeds forwarded benches' lines to them). */
    engines,

    /** The transfer data and plan of the run active on a bench, for the simulated rig's autopilot. */
    simContext(benchId: string): SimRunContext | undefined {
      const id = engines.activeRunId(benchId);
      const p = id ? loaded.get(id) : undefined;
      if (!p) return undefined;
      return {
        runId: id!,
        currentIndex: engines.has(benchId) ? (engines.get(benchId).snapshot()?.currentIndex ?? null) : null,
        unit: p.unit,
        lrv: p.instrument.lrv,
        urv: p.instrument.urv,
        outputMode: p.instrument.outputMode,
        cutoff: cutoffOf(p.instrument),
        holdSeconds: p.holdSeconds,
        points: p.points.map((x) => ({ targetDp: x.targetDp, approach: x.approach, window: x.window })),
      };
    },

    /** After a restart: loads the runs that were running or paused back into their engines. */
    async restoreActive(): Promise<number> {
      let n = 0;
      for (const row of await runsRepo.active()) {
        const p = row.plan as FrozenPlan;
        if (engines.activeRunId(p.benchId)) {
          await runsRepo.update(row.id, { status: 'aborted', endedAt: new Date() });
          continue;
        }
        await restore(row);
        n++;
      }
      return n;
    },

    async start(actor: SessionUser, jobId: string, body: StartRunBody): Promise<Run> {
      const job = await jobFacts(jobId);
      if (job.assigneeId !== actor.id) throw forbidden('Only the technician assigned to this job may start its runs');
      if (job.status === 'submitted' || job.status === 'approved') throw conflict(`The job is ${job.status}; no more runs may start`);
      if (job.blockers.length) throw conflict(`The run cannot start: ${job.blockers.join('; ')}`, { blockers: job.blockers });
      const benchId = body.benchId ?? DEFAULT_BENCH_ID;
      if (o.mayRunOn && !o.mayRunOn(benchId, actor)) throw badRequest(`No bench ${benchId} that you may run on: use this server's bench, a registered agent's or your own browser bench`, { benchId: ['Not a bench you may run on'] });
      const engine = engines.get(benchId);
      if (engine.activeRunId) throw conflict(`Another run is active on ${benchId}; pause is not enough, finish or abort it first`);
      const inst: InstrumentRow | undefined = await instruments.get(job.instrumentId);
      if (!inst) throw notFound('The job\u2019s instrument no longer exists');
      if (!isPressureUnitId(inst.unit)) throw badRequest(`The instrument's unit '${inst.unit}' is not a pressure unit`);
      const site = await siteSettings();
      const holdSeconds = o.envHoldSeconds !== DEFAULT_HOLD_SECONDS ? o.envHoldSeconds : (Number(site.holdSeconds) > 0 ? Number(site.holdSeconds) : DEFAULT_HOLD_SECONDS);
      const decisionRule = (DECISION_RULES as readonly string[]).includes(site.decisionRule ?? '') ? (site.decisionRule as DecisionRule) : 'guard-band';
      const windowPctOfSpan = Number(site.windowPctOfSpan) > 0 ? Number(site.windowPctOfSpan) : 0.5;
      const instrument: FrozenPlan['instrument'] = {
        id: inst.id,
        tag: inst.tag,
        lrv: inst.lrv,
        urv: inst.urv,
        unit: inst.unit,
        outputMode: inst.outputMode,
        cutoffMode: inst.cutoffMode,
        cutoffValue: inst.cutoffValue,
        tolerancePct: inst.tolerancePct,
        primaryElement: PrimaryElementSchema.nullable().catch(null).parse(inst.primaryElement ?? null),
      };
      const { points, warnings } = planFor(body.kind, body.trim, instrument, windowPctOfSpan);
      const performer = { id: actor.id, email: actor.email };
      const coverage = { coverageProbability: site.coverageProbability, coverageFactor: site.coverageFactor, minimumTur: site.minimumTur };
      const frozen: FrozenPlan = { benchId, trim: body.trim ?? null, unit: inst.unit, holdSeconds, windowPctOfSpan, decisionRule, instrument, standardIds: job.standardIds, points, warnings, performer, coverage, overrangeMarginPct: site.overrangeMarginPct ?? DEFAULT_OVERRANGE_MARGIN_PCT };
      const row = await runsRepo.create({ jobId, kind: body.kind, status: 'running', plan: frozen, startedBy: actor.id }, points.length);
      await audit.record(actor, 'run.started', 'run', row.id, undefined, { jobId, kind: body.kind, trim: frozen.trim, holdSeconds, points: points.length, benchId });
      loaded.set(row.id, frozen);
      refusal(() => engine.start(engineSettings(row, frozen, performer), points));
      await chain;
      return toRun(await loadRun(row.id));
    },

    async get(id: string): Promise<Run> {
      return toRun(await loadRun(id));
    },

    async manualCapture(actor: SessionUser, id: string, index: number, reason: string): Promise<Run> {
      const row = await loadRun(id);
      await mustPerform(actor, row);
      const engine = engineOf(row);
      // Stored and audited (with the user) on the capture path before this answers.
      refusal(() => engine.manualCapture(index, reason, { id: actor.id, email: actor.email }));
      await chain;
      return toRun(await loadRun(id));
    },

    async redo(actor: SessionUser, id: string, index: number, reason?: string): Promise<Run> {
      const row = await loadRun(id);
      await mustPerform(actor, row);
      const p = row.plan as FrozenPlan;
      const engine = engines.get(p.benchId);
      const snap = engine.snapshot();
      if ((!snap || snap.runId !== id) && row.status === 'complete') {
        if (engine.activeRunId) throw conflict(`Another run is active on ${p.benchId}`);
        await restore({ ...row, status: 'running' });
      }
      const before = (await currentPoints(row))[index];
      if (!before) throw notFound(`No point ${index}`);
      refusal(() => engineOf(row).redo(index));
      await audit.record(actor as Actor, 'run.point-redone', 'run', id, { index, state: before.state, flags: before.flags, capture: before.capture }, { index, state: 'approaching', reason: reason ?? null });
      await chain;
      return toRun(await loadRun(id));
    },

    async control(actor: SessionUser, id: string, what: 'pause' | 'resume' | 'abort'): Promise<Run> {
      const row = await loadRun(id);
      await mustPerform(actor, row);
      const engine = engineOf(row);
      refusal(() => engine[what]());
      await audit.record(actor as Actor, `run.${what === 'pause' ? 'paused' : what === 'resume' ? 'resumed' : 'abort-requested'}`, 'run', id);
      await chain;
      return toRun(await loadRun(id));
    },

    /**
     * The raw trace as the JSON body of `GET /api/runs/:id/trace`: `{ items: TraceSample[], truncated }`,
     * in pieces serialised by the repository (off the event loop on PGlite) so a long run's trace
     * does not stall the live path; gzip-compressed when asked. Throws (404) when the run is unknown.
     */
    async traceJson(
      id: string,
      q: { from?: number; to?: number; device?: 'pressure' | 'current'; limit: number },
      opts: { gzip?: boolean } = {},
    ): Promise<AsyncGenerator<Buffer>> {
      await loadRun(id);
      return samples.traceJson(id, q, opts);
    },

    /** Waits for every engine event so far to be stored and published (tests, shutdown). */
    async settle(): Promise<void> {
      await chain;
    },
  };
}
export type RunService = ReturnType<typeof createRunService>;
