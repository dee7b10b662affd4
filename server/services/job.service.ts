import type { Db } from '../db/client';
import { instrumentRepository, jobRepository, type JobRow } from '../db/repositories/register.repository';
import { userRepository } from '../db/repositories/user.repository';
import { badRequest, notFound } from '../errors';
import type { Job } from '../../shared/schemas/jobs';
import type { Actor, AuditService } from './audit.service';
import type { SessionUser } from './auth.service';
import { isoDate } from './dates';

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

export function createJobService(db: Db, audit: AuditService) {
  const jobs = jobRepository(db);
  const users = userRepository(db);
  const instruments = instrumentRepository(db);

  async function assignable(assigneeId: string) {
    const u = await users.findById(assigneeId);
    if (!u || !u.active || u.role !== 'technician') throw badRequest('Choose an active technician', { assigneeId: ['Not an active technician'] });
  }

  return {
    /** All jobs; a technician's own come first, then the rest by due date. */
    async list(viewer: SessionUser): Promise<Job[]> {
      const all = (await jobs.list()).map((r) => toJob(r));
      if (viewer.role !== 'technician') return all;
      return [...all.filter((j) => j.assigneeId === viewer.id), ...all.filter((j) => j.assigneeId !== viewer.id)];
    },
    async get(id: string): Promise<Job> {
      const row = await jobs.get(id);
      if (!row) throw notFound('No such job');
      return toJob(row);
    },
    async create(actor: Actor, body: { instrumentId: string; assigneeId: string | null; dueOn: string; notes: string }): Promise<Job> {
      if (!(await instruments.get(body.instrumentId))) throw badRequest('No such instrument', { instrumentId: ['No such instrument'] });
      if (body.assigneeId) await assignable(body.assigneeId);
      const row = await jobs.create({ ...body, createdBy: actor.id });
      const job = await this.get(row.id);
      await audit.record(actor, 'job.created', 'job', row.id, undefined, job);
      return job;
    },
    async assign(actor: Actor, id: string, assigneeId: string): Promise<Job> {
      const before = await this.get(id);
      if (before.status === 'approved') throw badRequest('An approved job cannot be reassigned');
      await assignable(assigneeId);
      await jobs.update(id, { assigneeId });
      const after = await this.get(id);
      await audit.record(actor, 'job.assigned', 'job', id, { assigneeId: before.assigneeId }, { assigneeId });
      return after;
    },
  };
}
export type JobService = ReturnType<typeof createJobService>;
