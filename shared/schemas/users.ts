import { z } from 'zod';
import { EmailSchema, PASSWORD_MIN_LENGTH, RoleSchema } from './auth';

export const UserSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
  role: RoleSchema,
  active: z.boolean(),
  createdAt: z.string(),
});
export type User = z.infer<typeof UserSchema>;

export const PasswordSchema = z
  .string()
  .min(PASSWORD_MIN_LENGTH, `At least ${PASSWORD_MIN_LENGTH} characters`)
  .max(256, 'At most 256 characters');

export const InviteUserBodySchema = z.object({
  email: EmailSchema,
  name: z.string().trim().min(1, 'Enter a name').max(120),
  role: RoleSchema,
  /** Initial password, given to the person out of band; checked against the common-password list. */
  password: PasswordSchema,
});
export type InviteUserBody = z.infer<typeof InviteUserBodySchema>;

export const UpdateUserBodySchema = z
  .object({ role: RoleSchema.optional(), active: z.boolean().optional(), name: z.string().trim().min(1).max(120).optional() })
  .refine((v) => v.role !== undefined || v.active !== undefined || v.name !== undefined, { message: 'Nothing to change' });
export type UpdateUserBody = z.infer<typeof UpdateUserBodySchema>;

export const IdParamSchema = z.object({ id: z.string().uuid('Not a valid id') });
