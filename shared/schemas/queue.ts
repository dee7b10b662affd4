import { z } from 'zod';
import { JobSchema } from './jobs';

/** The Queue: open jobs and instruments falling due without one. */

/** An instrument falling due without an open job. */
export const NeedsJobSchema = z.object({
  instrumentId: z.string(),
  tag: z.string(),
  service: z.string(),
  location: z.string(),
  intervalDays: z.number(),
  lastCalibratedOn: z.string().nullable(),
  /** Null when never calibrated (due now). */
  nextDueOn: z.string().nullable(),
  daysLeft: z.number().nullable(),
  overdue: z.boolean(),
});
export type NeedsJob = z.infer<typeof NeedsJobSchema>;

export const QueueQuerySchema = z.object({
  /** Show instruments due within this many days (default 30). */
  withinDays: z.coerce.number().int().min(0).max(730).default(30),
});

export const QueueSchema = z.object({
  /** Open work; the signed-in technician's own jobs first. */
  jobs: z.array(JobSchema),
  needsJob: z.array(NeedsJobSchema),
  withinDays: z.number(),
  /** Active technicians a lead may assign (empty for other roles). */
  technicians: z.array(z.object({ id: z.string(), name: z.string() })),
});
export type Queue = z.infer<typeof QueueSchema>;
