import { z } from 'zod';
import { EmailSchema, PASSWORD_MIN_LENGTH, RoleSchema, ROLES } from './auth';
import { atMost } from './numbers';

export const UserSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
  role: RoleSchema,
  active: z.boolean(),
  createdAt: z.string(),
  /** A new password must be chosen at the next sign-in (after an invite or a reset). */
  mustChangePassword: z.boolean().default(false),
  /** Sign-in locked until then (ISO date-time), or null. */
  signInLockedUntil: z.string().nullable().default(null),
  /** Password re-entry (signatures, password change) locked until then, or null. */
  signingLockedUntil: z.string().nullable().default(null),
});
export type User = z.infer<typeof UserSchema>;

export const PasswordSchema = z
  .string()
  .min(PASSWORD_MIN_LENGTH, `Use at least ${PASSWORD_MIN_LENGTH} characters`)
  .max(256, atMost(256));

export const InviteUserBodySchema = z.object({
  email: EmailSchema,
  name: z.string().trim().min(1, 'Enter a name').max(120, atMost(120)),
  role: z.enum(ROLES, { error: 'Choose a role' }),
  /** Initial password, given to the person out of band; checked against the common-password list. */
  password: PasswordSchema,
});
export type InviteUserBody = z.infer<typeof InviteUserBodySchema>;

export const UpdateUserBodySchema = z
  .object({ role: RoleSchema.optional(), active: z.boolean().optional(), name: z.string().trim().min(1).max(120).optional() })
  .refine((v) => v.role !== undefined || v.active !== undefined || v.name !== undefined, { message: 'Nothing to change' });
export type UpdateUserBody = z.infer<typeof UpdateUserBodySchema>;

/** Body of `POST /api/users/:id/reset-password` and `POST /api/users/:id/unlock`: an empty object. */
export const EmptyBodySchema = z.object({}).strict();

/** Reply of `POST /api/users/:id/reset-password`: the one-time password, shown once. */
export const ResetPasswordReplySchema = z.object({ user: UserSchema, password: z.string() });
export type ResetPasswordReply = z.infer<typeof ResetPasswordReplySchema>;

export const IdParamSchema = z.object({ id: z.string().uuid('Not a valid id') });
