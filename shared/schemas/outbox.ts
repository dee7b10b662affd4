import { z } from 'zod';

/** One message in the Outbox list (what the local fake SMTP server received). */
export const OutboxSummarySchema = z.object({
  id: z.string(),
  /** Receipt time, ISO 8601 UTC. */
  receivedAt: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
});
export type OutboxSummary = z.infer<typeof OutboxSummarySchema>;

/** One message with its bodies. */
export const OutboxMessageSchema = OutboxSummarySchema.extend({
  text: z.string(),
  html: z.string().nullable(),
  messageId: z.string().nullable(),
});
export type OutboxMessage = z.infer<typeof OutboxMessageSchema>;
