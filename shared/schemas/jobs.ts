import { z } from 'zod';

/** Life of a job (our names). */
export const JOB_STATUSES = ['open', 'in-progress', 'submitted', 'returned', 'approved'] as const;
export const JobStatusSchema = z.enum(JOB_STATUSES);
export type JobStatus = z.infer<typeof JobStatusSchema>;

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use YYYY-MM-DD');

export const CreateJobBodySchema = z.object({
  instrumentId: z.string().uuid('Choose an instrument'),
  assigneeId: z.string().uuid().nullable().default(null),
  dueOn: isoDate,
  notes: z.string().max(2000).default(''),
});
export type CreateJobBody = z.input<typeof CreateJobBodySchema>;

export const AssignJobBodySchema = z.object({ assigneeId: z.string().uuid('Choose a technician') });

export const JobSchema = z.object({
  id: z.string(),
  instrumentId: z.string(),
  tag: z.string(),
  status: JobStatusSchema,
  assigneeId: z.string().nullable(),
  assigneeName: z.string().nullable(),
  dueOn: z.string(),
  overdue: z.boolean(),
  permitNo: z.string().nullable(),
  notes: z.string(),
  revision: z.number(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Job = z.infer<typeof JobSchema>;
