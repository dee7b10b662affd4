import type { Db } from '../db/client';
import { instrumentRepository, jobRepository, standardRepository, type JobRow } from '../db/repositories/register.repository';
import { siteRepository, userRepository } from '../db/repositories/user.repository';
import { badRequest, conflict, forbidden, locked, notFound } from '../errors';
import { convertPressure, DEFAULT_MINIMUM_TUR, isPressureUnitId, standardFit } from '../../shared/calc';
import type { AccuracySpec } from '../../shared/schemas/standards';
import type { Checklist, ChecklistPatch, Job, JobDetail, ReturnNotice } from '../../shared/schemas/jobs';
import type { Actor, AuditService } from './audit.service';
import type { SessionUser } from './auth.service';
import { dueState, isoDate } from './dates';
import { createSiteClock } from './site-clock';
import { formatRange, unitLabel } from '../../shared/format';
import { reviewRepository } from '../db/repositories/review.repository';
import { createRecordFreezer, frozenRecordHash } from './record-snapshot';

export function toJob(r: JobRow, today = isoDate(new Date())): Job {
  return {
    id: r.id,
    instrumentId: r.instrumentId,
    tag: r.tag,
    status: r.status,
    assigneeId: r.assigneeId,
    assigneeName: r.assigneeName,
    dueOn: r.dueOn,
    overdue: r.status !== 'approved' && r.dueOn < today,
    permitNo: r.permitNo,
    notes: r.notes,
    revision: r.revision,
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  };
}

export const EMPTY_CHECKLIST: Checklist = {
  standardIds: [],
  permitNo: null,
  // No default: the technician answers whether a bypass is needed.
  bypass: { required: null, description: '', recorded: null, removed: null },
  operatorsInformed: null,
  isolated: null,
  vented: null,
  flushed: null,
  returnedToService: null,
};

function checklistOf(raw: unknown): Checklist {
  const c = (raw ?? {}) as Partial<Checklist>;
  return { ...EMPTY_CHECKLIST, ...c, bypass: { ...EMPTY_CHECKLIST.bypass, ...(c.bypass ?? {}) } };
}

/** Current a loop meter must read: NE 43 failure levels down to 3.6 mA and up to 21 mA. */
const CURRENT_SPAN_NEEDED = { min: 3.6, max: 21 };

/** Something the job flow tells the team about (mail); never allowed to block or fail the action. */
export type JobNotice =
  | { kind: 'assigned'; jobId: string; assigneeId: string; byName: string }
  | { kind: 'submitted'; jobId: string; byName: string; at: string; reply?: { text: string; comment: string; returnedBy: string; returnedAt: string } };

export function createJobService(db: Db, audit: AuditService, notify?: (notice: JobNotice) => void | Promise<void>) {
  const jobs = jobRepository(db);
  const tell = (n: JobNotice) => {
    try {
      void Promise.resolve(notify?.(n)).catch(() => {});
    } catch {
      /* mail never blocks the action */
    }
  };
  const users = userRepository(db);
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const records = reviewRepository(db);
  const sites = siteRepository(db);
  const freezer = createRecordFreezer(db, audit);
  const clock = createSiteClock(db);

  async function assignable(assigneeId: string) {
    const u = await users.findById(assigneeId);
    if (!u || !u.active || u.role !== 'technician') throw badRequest('Choose an active technician', { assigneeId: ['Not an active technician'] });
  }

  async function nameOf(actor: Actor): Promise<string> {
    return (actor as Partial<SessionUser>).name ?? (await users.findById(actor.id))?.name ?? actor.email;
  }

  async function row(id: string): Promise<JobRow> {
    const r = await jobs.get(id);
    if (!r) throw notFound('No such job');
    return r;
  }

  const service = {
    /**
     * All jobs by due date, open work before approved records (the history would otherwise lead the
     * list); for a technician their own open jobs come first.
     */
    async list(viewer: SessionUser): Promise<Job[]> {
      const today = await clock.today();
      const all = (await jobs.list()).map((r) => toJob(r, today));
      const open = all.filter((j) => j.status !== 'approved');
      const done = all.filter((j) => j.status === 'approved');
      if (viewer.role !== 'technician') return [...open, ...done];
      return [...open.filter((j) => j.assigneeId === viewer.id), ...open.filter((j) => j.assigneeId !== viewer.id), ...done];
    },
    async get(id: string): Promise<Job> {
      return toJob(await row(id), await clock.today());
    },

    /**
     * The job with its checklist, the chosen standards and their checks, its runs, and what
     * blocks the next run and the submission — in words a technician can act on.
     */
    async detail(id: string, today?: string): Promise<JobDetail> {
      today ??= await clock.today();
      const r = await row(id);
      const checklist = checklistOf(r.checklist);
      const instrument = (await instruments.get(r.instrumentId))!;
      const chosen = [];
      for (const sid of checklist.standardIds) {
        const s = await standards.get(sid);
        if (!s) continue;
        const state = dueState(s.dueOn, today);
        let problem: string | null = state === 'expired' ? `calibration expired on ${s.dueOn}` : null;
        if (!problem && s.kind === 'pressure') {
          if (isPressureUnitId(s.unit) && isPressureUnitId(instrument.unit)) {
            const hi = convertPressure(Math.max(instrument.lrv, instrument.urv), instrument.unit, s.unit);
            const lo = convertPressure(Math.min(instrument.lrv, instrument.urv), instrument.unit, s.unit);
            if (hi > s.rangeMax * (1 + 1e-9) || lo < s.rangeMin - 1e-9)
              problem = `range ${formatRange(s.rangeMin, s.rangeMax, s.unit)} does not cover the instrument's ${formatRange(instrument.lrv, instrument.urv, instrument.unit)}`;
          } else problem = `unit ${unitLabel(s.unit)} cannot be compared with ${unitLabel(instrument.unit)}`;
        }
        if (!problem && s.kind === 'current' && (s.rangeMin > CURRENT_SPAN_NEEDED.min || s.rangeMax < CURRENT_SPAN_NEEDED.max)) {
          problem = `range ${formatRange(s.rangeMin, s.rangeMax, 'mA')} does not cover 3.6–21 mA`;
        }
        chosen.push({ id: s.id, kind: s.kind, description: s.description, serial: s.serial, certificateNo: s.certificateNo, dueOn: s.dueOn, dueState: state, problem, certificateFileId: s.certificateFileId ?? null });
      }
      const runs = await jobs.runs(id);
      const blockers: string[] = [];
      if (!r.assigneeId) blockers.push('No technician is assigned');
      if (r.status === 'submitted' || r.status === 'approved') blockers.push(`The job is ${r.status}`);
      if (!chosen.some((s) => s.kind === 'pressure')) blockers.push('Choose a pressure reference standard');
      if (!chosen.some((s) => s.kind === 'current')) blockers.push('Choose a current meter');
      for (const s of chosen) if (s.problem) blockers.push(`${s.description} (${s.serial}): ${s.problem}`);
      if (!checklist.permitNo) blockers.push('Record the permit-to-work number');
      if (checklist.bypass.required === null) blockers.push('Answer whether an interlock bypass is needed');
      if (checklist.bypass.required && !checklist.bypass.recorded) blockers.push('Record the interlock bypass');
      if (!checklist.operatorsInformed) blockers.push('Confirm the operators are informed');
      if (!checklist.isolated) blockers.push('Confirm the transmitter is isolated from the process');
      if (!checklist.vented) blockers.push('Confirm the transmitter is vented and drained');
      if (instrument.hazardousMedium && !checklist.flushed) blockers.push('Confirm the hazardous medium is flushed (this tag is marked hazardous)');

      const results = (kind: string) => runs.filter((x) => x.kind === kind && x.status === 'complete');
      const decisionOf = (x: (typeof runs)[number]) => (x.results?.overallDecision ?? null);
      const submitBlockers: string[] = [];
      const asFound = results('as-found').at(-1);
      if (!asFound) submitBlockers.push('Complete the as-found run');
      const trimmed = runs.some((x) => x.kind === 'trim' && x.status === 'complete');
      const asLeft = results('as-left').at(-1);
      if (asFound && (decisionOf(asFound) !== 'pass' || trimmed) && !asLeft) submitBlockers.push('Complete the as-left run');
      if (checklist.bypass.required && checklist.bypass.recorded && !checklist.bypass.removed) submitBlockers.push('Record the removal of the interlock bypass');
      if (!checklist.returnedToService) submitBlockers.push('Confirm the loop is returned to service');
      if (r.status !== 'in-progress' && r.status !== 'open' && r.status !== 'returned') submitBlockers.push(`The job is ${r.status}`);

      const minimumTur = (await sites.settings()).minimumTur ?? DEFAULT_MINIMUM_TUR;
      const standardFits = [];
      for (const s of await standards.all()) {
        const fit = standardFit({ ...s, accuracy: s.accuracy as AccuracySpec }, instrument);
        if (!fit) continue;
        const tur = Number(fit.tur.toPrecision(3));
        const warnings = [];
        if (fit.tur < minimumTur) warnings.push(`TUR ${tur} : 1 is below the site minimum of ${minimumTur} : 1 at this tolerance`);
        // A resolution coarser than a tenth of the tolerance cannot show a reading inside it well (common practice).
        if (fit.resolutionPctOfTolerance > 10) warnings.push(`its resolution is ${Number(fit.resolutionPctOfTolerance.toPrecision(2))} % of the tolerance`);
        standardFits.push({ id: s.id, tur, resolutionPctOfTolerance: fit.resolutionPctOfTolerance, minimumTur, warning: warnings.length ? warnings.join('; ') : null });
      }

      return {
        ...toJob(r, today),
        returned: r.status === 'returned' ? await service.lastReturn(id, r.revision) : null,
        checklist,
        standards: chosen,
        standardFits,
        hazardousMedium: instrument.hazardousMedium,
        runs: runs.map((x) => ({
          id: x.id,
          kind: x.kind,
          status: x.status,
          startedAt: x.startedAt.toISOString(),
          endedAt: x.endedAt?.toISOString() ?? null,
          overallDecision: decisionOf(x),
        })),
        blockers,
        submitBlockers,
      };
    },

    /** The return that stands on this revision: the lead's comment, who and when (null when none). */
    async lastReturn(id: string, revision: number): Promise<ReturnNotice | null> {
      const last = (await records.signatures(id)).filter((x) => x.decision === 'return' && x.revision === revision).at(-1);
      return last ? { signatureId: last.id, revision: last.revision, comment: last.comment, byName: last.signerName, at: last.signedAt.toISOString() } : null;
    },

    async create(actor: Actor, body: { instrumentId: string; assigneeId: string | null; dueOn: string; notes: string }): Promise<Job> {
      if (!(await instruments.get(body.instrumentId))) throw badRequest('No such instrument', { instrumentId: ['No such instrument'] });
      if (body.assigneeId) await assignable(body.assigneeId);
      const created = await jobs.create({ ...body, createdBy: actor.id });
      const job = await service.get(created.id);
      await audit.record(actor, 'job.created', 'job', created.id, undefined, job);
      if (body.assigneeId) tell({ kind: 'assigned', jobId: created.id, assigneeId: body.assigneeId, byName: await nameOf(actor) });
      return job;
    },

    async assign(actor: Actor, id: string, assigneeId: string): Promise<Job> {
      const before = await service.get(id);
      if (before.status === 'approved') throw locked('An approved job cannot be reassigned');
      await assignable(assigneeId);
      await jobs.update(id, { assigneeId });
      await audit.record(actor, 'job.assigned', 'job', id, { assigneeId: before.assigneeId }, { assigneeId });
      if (before.assigneeId !== assigneeId) tell({ kind: 'assigned', jobId: id, assigneeId, byName: await nameOf(actor) });
      return service.get(id);
    },

    /** Preparation and return-to-service steps; the server stamps who and when. Assignee only. */
    async updateChecklist(actor: SessionUser, id: string, patch: ChecklistPatch): Promise<JobDetail> {
      const r = await row(id);
      if (r.assigneeId !== actor.id) throw forbidden('Only the assigned technician prepares this job');
      if (r.status === 'submitted' || r.status === 'approved') throw locked(`The job is ${r.status}; its checklist is locked`);
      const before = checklistOf(r.checklist);
      const c: Checklist = structuredClone(before);
      const stamp = { by: actor.id, byName: actor.name, at: new Date().toISOString() };
      if (patch.standardIds) {
        for (const sid of patch.standardIds) if (!(await standards.get(sid))) throw badRequest('No such standard', { standardIds: [`Unknown standard ${sid}`] });
        c.standardIds = [...new Set(patch.standardIds)];
      }
      if (patch.permitNo !== undefined) c.permitNo = patch.permitNo;
      if (patch.bypass) {
        if (c.bypass.recorded && !patch.bypass.required && !c.bypass.removed) {
          throw badRequest('The bypass is recorded; record its removal instead', { bypass: ['Record the removal'] });
        }
        c.bypass = { ...c.bypass, required: patch.bypass.required, description: patch.bypass.description };
      }
      if (patch.bypassRecorded) {
        if (!c.bypass.required) throw badRequest('Say that a bypass is needed and which one first', { bypass: ['No bypass is declared'] });
        c.bypass.recorded = stamp;
      }
      if (patch.bypassRemoved) {
        if (!c.bypass.recorded) throw badRequest('No bypass was recorded', { bypassRemoved: ['Nothing to remove'] });
        c.bypass.removed = stamp;
      }
      for (const k of ['operatorsInformed', 'isolated', 'vented', 'flushed', 'returnedToService'] as const) if (patch[k]) c[k] = stamp;
      if (patch.conditions) c.conditions = { ...patch.conditions, recorded: stamp };
      await jobs.update(id, { checklist: c, permitNo: c.permitNo, status: r.status === 'open' ? 'in-progress' : r.status });
      await audit.record(actor, 'job.checklist-changed', 'job', id, before, c);
      return service.detail(id);
    },

    /**
     * Hands the job to review; refused with the reasons while anything is missing. After a return,
     * `reply` answers the lead's comment: stored with the submission, audited, and mailed to the leads.
     */
    async submit(actor: SessionUser, id: string, body: { reply?: string } = {}): Promise<JobDetail> {
      const r = await row(id);
      if (r.assigneeId !== actor.id) throw forbidden('Only the assigned technician submits this job');
      const d = await service.detail(id);
      if (d.submitBlockers.length) throw badRequest(`Not ready to submit: ${d.submitBlockers.join('; ')}`, { submit: d.submitBlockers });
      // Everything the record and its certificate say is frozen with the submission (DESIGN.md §4).
      const at = new Date();
      const snapshot = await freezer.build(d, { id: actor.id, name: actor.name }, at);
      const hash = frozenRecordHash(snapshot);
      const answered = r.status === 'returned' ? d.returned : null;
      const reply = answered && body.reply ? body.reply : '';
      if (body.reply && !answered) throw badRequest('Only a returned job takes a reply', { reply: ['The job was not returned; there is nothing to reply to'] });
      const moved = await records.submitWithSnapshot(
        { jobId: id, revision: d.revision, snapshot, hash, frozenAt: at },
        ['open', 'in-progress', 'returned'],
        answered && reply ? { signatureId: answered.signatureId, reply, byId: actor.id, byName: actor.name } : undefined,
      );
      if (!moved) throw conflict('The job changed while it was being submitted; reload it');
      await audit.record(
        actor,
        'job.submitted',
        'job',
        id,
        { status: r.status },
        { status: 'submitted', revision: d.revision, recordHash: hash, ...(answered ? { answers: answered.signatureId, reply } : {}) },
      );
      tell({
        kind: 'submitted',
        jobId: id,
        byName: actor.name,
        at: at.toISOString(),
        ...(answered ? { reply: { text: reply, comment: answered.comment, returnedBy: answered.byName, returnedAt: answered.at } } : {}),
      });
      return service.detail(id);
    },
  };
  return service;
}
export type JobService = ReturnType<typeof createJobService>;
