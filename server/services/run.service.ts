/**
 * Runs: start (plan and settings frozen into the run), the capture engine's events persisted
 * (point states, flags, captures; captures audited), commands (manual capture, redo, pause,
 * resume, abort), results from shared/calc and the raw trace.
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
import type { SiteSettings } from '../../shared/schemas/settings';
import { orificeSpecOf, PrimaryElementSchema, type PrimaryElement } from '../../shared/schemas/instruments';
import { EngineRefusal, type EngineEvent, type EngineRunSettings } from '../bench/capture-engine';
import type { Db } from '../db/client';
import { instrumentRepository, jobRepository, standardRepository, type InstrumentRow, type StandardRow } from '../db/repositories/register.repository';
import { runRepository, type RunRow } from '../db/repositories/run.repository';
import { sampleRepository } from '../db/repositories/sample.repository';
import { siteRepository } from '../db/repositories/user.repository';
import { AppError, badRequest, conflict, forbidden, locked, notFound } from '../errors';
import type { Actor, AuditService } from './audit.service';
import { DEFAULT_BENCH_ID, type BenchService } from './bench.service';
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
}

export interface RunServiceOptions {
  /** HOLD_SECONDS from the environment; wins over the site setting when it differs from the default 30 s. */
  envHoldSeconds: number;
  logger: Logger;
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

export function createRunService(db: Db, audit: AuditService, jobsSource: JobDetailSource, bench: BenchService, o: RunServiceOptions) {
  const runsRepo = runRepository(db);
  const samples = sampleRepository(db);
  const jobsRepo = jobRepository(db);
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const sites = siteRepository(db);
  /** Frozen plans of runs loaded in an engine. */
  const loaded = new Map<string, FrozenPlan>();
  let chain: Promise<void> = Promise.resolve();

  bench.onEngineEvent((e) => {
    chain = chain.then(() => persist(e)).catch((err: unknown) => o.logger.error({ err, runId: e.runId }, 'persisting a run event failed'));
  });
  bench.setSimContext(() => {
    const id = bench.engine(bench.benchId).activeRunId;
    const p = id ? loaded.get(id) : undefined;
    if (!p) return undefined;
    return {
      unit: p.unit,
      lrv: p.instrument.lrv,
      urv: p.instrument.urv,
      outputMode: p.instrument.outputMode,
      cutoff: cutoffOf(p.instrument),
      holdSeconds: p.holdSeconds,
      points: p.points.map((x) => ({ targetDp: x.targetDp, approach: x.approach })),
    };
  });

  async function persist(e: EngineEvent): Promise<void> {
    switch (e.type) {
      case 'point.changed':
        await runsRepo.updatePoint(e.runId, e.index, { state: e.state, flags: e.flags });
        return;
      case 'point.captured':
        await runsRepo.updatePoint(e.runId, e.index, { state: 'captured', flags: e.flags, capture: e.capture, reason: e.capture.manualReason });
        // Manual captures are audited with their actor by manualCapture().
        if (!e.manual) await audit.record(null, 'run.point-captured', 'run', e.runId, undefined, { index: e.index, flags: e.flags, capture: e.capture });
        return;
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
        return;
      }
      case 'run.warned':
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

  function engineSettings(row: RunRow, p: FrozenPlan): EngineRunSettings {
    return { runId: row.id, benchId: p.benchId, unit: p.unit, dpSpan: Math.abs(span(specOf(p.instrument).range)), holdSeconds: p.holdSeconds };
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

  /** Points of a run: the engine's live view when it is loaded, else the stored rows. */
  async function currentPoints(row: RunRow): Promise<RunPoint[]> {
    const p = row.plan as FrozenPlan;
    const snap = bench.engine(p.benchId).snapshot();
    if (snap && snap.runId === row.id) {
      return snap.points.map((x) => ({ ...planFields(x.plan), state: x.state, flags: x.flags, capture: x.capture, warning: x.warning }));
    }
    const rows = await runsRepo.points(row.id);
    return p.points.map((pp, i) => {
      const r = rows[i];
      return { ...planFields(pp), state: (r?.state ?? 'waiting') as PointState, flags: (r?.flags ?? []) as PointFlag[], capture: (r?.capture ?? null) as PointCapture | null, warning: null };
    });
  }

  function planFields(pp: PlanPoint) {
    return { index: pp.index, nominalPct: pp.nominalPct, basis: pp.basis, dpPct: pp.dpPct, targetDp: pp.targetDp, expectedMa: pp.expectedMa, approach: pp.approach, window: pp.window };
  }

  async function toRun(row: RunRow): Promise<Run> {
    const p = row.plan as FrozenPlan;
    const points = await currentPoints(row);
    const snap = bench.engine(p.benchId).snapshot();
    const live = snap && snap.runId === row.id ? snap : undefined;
    const { results, problem, modeCheck } = await computeResults(row);
    return {
      id: row.id,
      jobId: row.jobId,
      kind: row.kind,
      trim: p.trim,
      status: live ? live.status : row.status,
      unit: p.unit,
      holdSeconds: p.holdSeconds,
      currentIndex: live ? live.currentIndex : null,
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
    const engine = bench.engine(p.benchId);
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
    bench.engine(p.benchId).start(engineSettings(row, p), p.points, {
      status: row.status === 'paused' ? 'paused' : 'running',
      points: rows.map((r) => ({ state: r.state as PointState, flags: r.flags as PointFlag[], capture: r.capture as PointCapture | null })),
    });
  }

  return {
    /** After a restart: loads the runs that were running or paused back into their engines. */
    async restoreActive(): Promise<number> {
      let n = 0;
      for (const row of await runsRepo.active()) {
        const p = row.plan as FrozenPlan;
        if (bench.engine(p.benchId).activeRunId) {
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
      const engine = bench.engine(benchId);
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
      const coverage = { coverageProbability: site.coverageProbability, coverageFactor: site.coverageFactor, minimumTur: site.minimumTur };
      const frozen: FrozenPlan = { benchId, trim: body.trim ?? null, unit: inst.unit, holdSeconds, windowPctOfSpan, decisionRule, instrument, standardIds: job.standardIds, points, warnings, coverage };
      const row = await runsRepo.create({ jobId, kind: body.kind, status: 'running', plan: frozen, startedBy: actor.id }, points.length);
      await audit.record(actor, 'run.started', 'run', row.id, undefined, { jobId, kind: body.kind, trim: frozen.trim, holdSeconds, points: points.length, benchId });
      loaded.set(row.id, frozen);
      refusal(() => engine.start(engineSettings(row, frozen), points));
      return toRun(row);
    },

    async get(id: string): Promise<Run> {
      return toRun(await loadRun(id));
    },

    async manualCapture(actor: SessionUser, id: string, index: number, reason: string): Promise<Run> {
      const row = await loadRun(id);
      await mustPerform(actor, row);
      const engine = engineOf(row);
      const capture = refusal(() => engine.manualCapture(index, reason, actor.email));
      await audit.record(actor as Actor, 'run.point-captured-manually', 'run', id, undefined, { index, reason, capture });
      await chain;
      return toRun(row);
    },

    async redo(actor: SessionUser, id: string, index: number): Promise<Run> {
      const row = await loadRun(id);
      await mustPerform(actor, row);
      const p = row.plan as FrozenPlan;
      const engine = bench.engine(p.benchId);
      const snap = engine.snapshot();
      if ((!snap || snap.runId !== id) && row.status === 'complete') {
        if (engine.activeRunId) throw conflict(`Another run is active on ${p.benchId}`);
        await restore({ ...row, status: 'running' });
      }
      const before = (await currentPoints(row))[index];
      if (!before) throw notFound(`No point ${index}`);
      refusal(() => engineOf(row).redo(index));
      await audit.record(actor as Actor, 'run.point-redone', 'run', id, { index, state: before.state, flags: before.flags, capture: before.capture }, { index, state: 'approaching' });
      await chain;
      return toRun(row);
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

    /** Waits for every engine event so far to be persisted (tests, shutdown). */
    async settle(): Promise<void> {
      await chain;
    },
  };
}
export type RunService = ReturnType<typeof createRunService>;
