/**
 * Runs: start (plan and settings frozen into the run), the capture path (each bench's capture
 * engine raises run events → this service stores what they change: point states, flags, captures
 * with their audit event, run status → only then the hub numbers and publishes them to the stream),
 * commands (manual capture, redo, pause, resume, abort), results from shared/calc and the raw trace.
 * What `GET /api/runs/:id` says of points and status is read from the database, so it never shows
 * a capture that is not stored; the current index and warnings come from the events published so far.
 */
import type { Logger } from 'pino';
import type { EvaluateOutput } from '../../shared/calc';
import type { PointCapture, PointFlag, PointState, Run, RunPoint, StartRunBody } from '../../shared/schemas/runs';
import type { JobDetail } from '../../shared/schemas/jobs';
import type { SiteSettings } from '../../shared/schemas/settings';
import type { RunEvent } from '../../shared/schemas/stream';
import { EngineRefusal } from '../bench/capture-run';
import { CaptureEngines } from '../bench/capture-engines';
import type { BenchHub } from '../bench/hub';
import type { SimRunContext } from '../bench/sim-control';
import type { Db } from '../db/client';
import { instrumentRepository, jobRepository, standardRepository, type InstrumentRow } from '../db/repositories/register.repository';
import { runRepository, type RunRepository, type RunRow } from '../db/repositories/run.repository';
import { sampleRepository } from '../db/repositories/sample.repository';
import { siteRepository, userRepository } from '../db/repositories/user.repository';
import { AppError, badRequest, conflict, forbidden, locked, notFound } from '../errors';
import type { Actor, AuditService } from './audit.service';
import { DEFAULT_BENCH_ID } from './bench.service';
import type { SessionUser } from './auth.service';
import { cutoffOf, engineSettings, freezePlan, planFields, type FrozenPlan } from './run-plan';
import { storeWithRetry, type StoreRetryOptions } from './run-commit';
import { createRunEventWriter } from './run-events';
import { evaluateRun, modeCheckOf, type RunResultsView } from './run-results';

/** What the run service needs of the job service: `detail(id)` with `blockers` (see JobDetailSchema). */
export interface JobDetailSource {
  detail: (id: string) => Promise<JobDetail>;
}

/** What the run service is given by the composition root. */
export interface RunServiceDeps {
  audit: AuditService;
  jobs: JobDetailSource;
  /** The hub that numbers and publishes run events once they are stored. */
  hub: BenchHub;
  /** Run and point storage (default over `db`; the composition root may wrap it). */
  runs?: RunRepository;
  /** HART in the job (hart-job.service.ts): what blocks a run on a bench with a HART device. */
  hart?: {
    blockersForRun(actor: SessionUser, jobId: string, benchId: string): Promise<string[]>;
    /** The device's digital PV and loop current over a captured point's hold (hart-point.ts). */
    pointAtCapture(benchId: string, capture: PointCapture, ctx: { unit: string; lrv: number; urv: number }): PointCapture['hart'];
  };
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
  /** Retries of a run event whose store failed (run-commit.ts); default 5 attempts, 100 ms doubling to 2 s between them. */
  storeRetry?: StoreRetryOptions;
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
  const writer = createRunEventWriter({ runs: runsRepo, audit, resultsOf: async (row) => (await computeResults(row)).results });
  /** The capture path, one event at a time in the engines' order: store, then publish. */
  let chain: Promise<void> = Promise.resolve();
  const engines = new CaptureEngines(hub, (_benchId, e) => {
    chain = chain.then(() => commit(e)).catch((err: unknown) => o.logger.error({ err, runId: e.runId, event: e.type }, 'storing a run event failed; it was not published'));
  });

  /** Stores what an event changes, then has the hub number and publish it. */
  async function commit(e: RunEvent): Promise<void> {
    const p = e.type === 'point.captured' ? loaded.get(e.runId) : undefined;
    if (e.type === 'point.captured' && p && deps.hart) {
      const hart = deps.hart.pointAtCapture(e.benchId, e.capture, { unit: p.unit, lrv: p.instrument.lrv, urv: p.instrument.urv });
      if (hart) e = { ...e, capture: { ...e.capture, hart } };
    }
    // Retried in place: the chain holds later events back meanwhile, and every attempt stores the same `e`.
    await storeWithRetry(e, writer.store, o.logger, o.storeRetry);
    hub.publish(e);
    const v = published.get(e.runId) ?? { currentIndex: null, warnings: new Map<number, string | null>() };
    published.set(e.runId, v);
    if (e.type === 'run.changed') v.currentIndex = e.currentIndex;
    else if (e.type === 'point.changed' && e.warning !== undefined) v.warnings.set(e.index, e.warning);
  }

  async function siteSettings(): Promise<SiteSettings> {
    return sites.settings();
  }

  async function jobFacts(jobId: string): Promise<{ assigneeId: string | null; status: string; instrumentId: string; standardIds: string[]; blockers: string[] }> {
    const d = await jobsSource.detail(jobId);
    return { assigneeId: d.assigneeId, status: d.status, instrumentId: d.instrumentId, standardIds: d.checklist.standardIds, blockers: d.blockers };
  }

  /** The run's performer: frozen in the plan, or (older runs) the user who started it. */
  async function performerOf(row: RunRow, p: FrozenPlan): Promise<{ id: string; email: string } | null> {
    if (p.performer) return p.performer;
    const u = row.startedBy ? await users.findById(row.startedBy) : undefined;
    return u ? { id: u.id, email: u.email } : null;
  }

  /** Results of a run; `points`, when the caller has just read them, saves reading them again. */
  async function computeResults(row: RunRow, points?: RunPoint[]): Promise<RunResultsView> {
    const p = row.plan as FrozenPlan;
    const captured = (points ?? (await currentPoints(row))).filter((x) => x.capture);
    if (!captured.length) return { results: null, problem: null, modeCheck: null };
    const modeCheck = modeCheckOf(row.kind, p, captured);
    // A finished run answers with the results stored when it completed — the ones a submission
    // freezes into the record — so a later edit of a standard does not change what the API says.
    const live = engines.activeRunId(p.benchId) === row.id;
    if (row.status === 'complete' && !live && row.results) return { results: row.results as EvaluateOutput, problem: null, modeCheck };
    const chosen = await standards.getMany(p.standardIds);
    return { ...evaluateRun(p, captured, chosen), modeCheck };
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

  async function toRun(row: RunRow): Promise<Run> {
    const p = row.plan as FrozenPlan;
    const points = await currentPoints(row);
    const { results, problem, modeCheck } = await computeResults(row, points);
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
    writer.remember(row.id, rows);
    engines.get(p.benchId).start(engineSettings(row.id, p, await performerOf(row, p)), p.points, {
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
      const hartBlockers = (await deps.hart?.blockersForRun(actor, jobId, benchId)) ?? [];
      if (hartBlockers.length) throw conflict(`The run cannot start: ${hartBlockers.join('; ')}`, { blockers: hartBlockers });
      const inst: InstrumentRow | undefined = await instruments.get(job.instrumentId);
      if (!inst) throw notFound('The job\u2019s instrument no longer exists');
      const frozen = freezePlan({ inst, site: await siteSettings(), envHoldSeconds: o.envHoldSeconds, benchId, body, standardIds: job.standardIds, performer: { id: actor.id, email: actor.email } });
      const { points, holdSeconds } = frozen;
      const row = await runsRepo.create({ jobId, kind: body.kind, status: 'running', plan: frozen, startedBy: actor.id }, points.length);
      await audit.record(actor, 'run.started', 'run', row.id, undefined, { jobId, kind: body.kind, trim: frozen.trim, holdSeconds, points: points.length, benchId });
      loaded.set(row.id, frozen);
      refusal(() => engine.start(engineSettings(row.id, frozen, frozen.performer!), points));
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
