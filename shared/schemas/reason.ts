import { z } from 'zod';

/** Why an audited exception was made (a manual capture, a register corrected to the device, a device recorded as found): at least 5 characters. */
export const ReasonBodySchema = z.object({ reason: z.string().trim().min(5, 'Give a reason of at least 5 characters').max(500) });
export type ReasonBody = z.infer<typeof ReasonBodySchema>;
