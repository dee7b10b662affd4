import { z } from 'zod';

/** The four roles of DESIGN.md §2. */
export const ROLES = ['technician', 'lead', 'admin', 'auditor'] as const;
export const RoleSchema = z.enum(ROLES);
export type Role = z.infer<typeof RoleSchema>;

/** Minimum password length (NIST SP 800-63B §5.1.1.2 asks for at least 8; we ask for 10). */
export const PASSWORD_MIN_LENGTH = 10;

export const EmailSchema = z.string().trim().toLowerCase().pipe(z.email({ message: 'Enter a valid email address' }));

export const LoginBodySchema = z.object({
  email: EmailSchema,
  password: z.string().min(1, 'Enter your password').max(256),
});
export type LoginBody = z.infer<typeof LoginBodySchema>;

/** Body of `POST /api/auth/password`: the current password and the new one. */
export const ChangePasswordBodySchema = z.object({
  current: z.string().min(1, 'Enter your current password').max(256),
  next: z
    .string()
    .min(PASSWORD_MIN_LENGTH, `At least ${PASSWORD_MIN_LENGTH} characters`)
    .max(256, 'At most 256 characters'),
});
export type ChangePasswordBody = z.infer<typeof ChangePasswordBodySchema>;

export const MeSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
  role: RoleSchema,
  siteName: z.string(),
  /** The site's time zone (IANA name; 'UTC' when the site has not set one): dates are shown and "today" is taken in it. */
  timeZone: z.string().optional(),
  /** True until the user has chosen their own password (after an invite or an admin reset); the server always sends it. */
  mustChangePassword: z.boolean().optional(),
});
export type Me = z.infer<typeof MeSchema>;

export const HealthSchema = z.object({
  ok: z.boolean(),
  db: z.enum(['pglite', 'postgres']),
  bench: z.enum(['sim', 'serial']),
});
export type Health = z.infer<typeof HealthSchema>;
