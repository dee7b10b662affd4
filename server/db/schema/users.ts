import { boolean, index, integer, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

export const sites = pgTable('sites', {
  id: uuid('id').primaryKey().defaultRandom(),
  name: text('name').notNull(),
  domain: text('domain').notNull(),
  /** Site settings (hold time, stability and leak limits, decision rule) as JSON; see SiteSettingsSchema. */
  settings: text('settings').notNull().default('{}'),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

export const users = pgTable(
  'users',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    email: text('email').notNull().unique(),
    name: text('name').notNull(),
    role: text('role', { enum: ['technician', 'lead', 'admin', 'auditor'] }).notNull(),
    passwordHash: text('password_hash').notNull(),
    active: boolean('active').notNull().default(true),
    /** Set on invite and on an admin reset: the user must choose a new password before anything else. */
    mustChangePassword: boolean('must_change_password').notNull().default(false),
    /** Failed sign-ins since the last success (the account throttle). */
    failedSignIns: integer('failed_sign_ins').notNull().default(0),
    /** Sign-in refused until then (a temporary lock an admin can lift). */
    signInLockedUntil: timestamp('sign_in_locked_until', { withTimezone: true }),
    /** Wrong signature passwords in a row since the last accepted one. */
    signatureFailures: integer('signature_failures').notNull().default(0),
    /** Signing refused until then. */
    signingLockedUntil: timestamp('signing_locked_until', { withTimezone: true }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('users_role_idx').on(t.role)],
);

/** Issued session tokens by jti, so a token can be revoked before it expires. */
export const sessions = pgTable('sessions', {
  jti: text('jti').primaryKey(),
  userId: uuid('user_id')
    .notNull()
    .references(() => users.id),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  revokedAt: timestamp('revoked_at', { withTimezone: true }),
});
