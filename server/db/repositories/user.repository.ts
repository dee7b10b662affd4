import { and, asc, eq, isNull, ne, sql } from 'drizzle-orm';
import type { Db } from '../client';
import { parseSiteSettings, type SiteSettings } from '../../../shared/schemas/settings';
import { sessions, sites, users } from '../schema';

export type UserRow = typeof users.$inferSelect;
export type SiteRow = typeof sites.$inferSelect;

export function userRepository(db: Db) {
  return {
    async findByEmail(email: string): Promise<UserRow | undefined> {
      const [row] = await db.select().from(users).where(eq(users.email, email)).limit(1);
      return row;
    },
    async findById(id: string): Promise<UserRow | undefined> {
      const [row] = await db.select().from(users).where(eq(users.id, id)).limit(1);
      return row;
    },
    async list(): Promise<UserRow[]> {
      return db.select().from(users).orderBy(asc(users.name));
    },
    async count(): Promise<number> {
      const rows = await db.select({ id: users.id }).from(users);
      return rows.length;
    },
    async create(values: typeof users.$inferInsert): Promise<UserRow> {
      const [row] = await db.insert(users).values(values).returning();
      return row!;
    },
    async update(
      id: string,
      values: Partial<
        Pick<UserRow, 'role' | 'active' | 'name' | 'passwordHash' | 'mustChangePassword' | 'failedSignIns' | 'signInLockedUntil' | 'signatureFailures' | 'signingLockedUntil'>
      >,
    ): Promise<UserRow | undefined> {
      const [row] = await db
        .update(users)
        .set({ ...values, updatedAt: new Date() })
        .where(eq(users.id, id))
        .returning();
      return row;
    },
    /** Counts one more failed sign-in, atomically; returns the new count. */
    async addSignInFailure(id: string): Promise<number> {
      const [row] = await db
        .update(users)
        .set({ failedSignIns: sql`${users.failedSignIns} + 1` })
        .where(eq(users.id, id))
        .returning({ n: users.failedSignIns });
      return row?.n ?? 0;
    },
    /** Counts one more wrong signature password, atomically; returns the new count. */
    async addSignatureFailure(id: string): Promise<number> {
      const [row] = await db
        .update(users)
        .set({ signatureFailures: sql`${users.signatureFailures} + 1` })
        .where(eq(users.id, id))
        .returning({ n: users.signatureFailures });
      return row?.n ?? 0;
    },
  };
}

export function sessionRepository(db: Db) {
  return {
    async create(values: { jti: string; userId: string; expiresAt: Date }): Promise<void> {
      await db.insert(sessions).values(values);
    },
    /** The unrevoked session with this id, only if it belongs to this user. */
    async findActive(jti: string, userId: string): Promise<typeof sessions.$inferSelect | undefined> {
      const [row] = await db
        .select()
        .from(sessions)
        .where(and(eq(sessions.jti, jti), eq(sessions.userId, userId), isNull(sessions.revokedAt)))
        .limit(1);
      return row;
    },
    async revoke(jti: string): Promise<void> {
      await db.update(sessions).set({ revokedAt: new Date() }).where(eq(sessions.jti, jti));
    },
    /** Revokes every open session of a user (but `exceptJti`); returns the ids revoked. */
    async revokeAllFor(userId: string, exceptJti?: string): Promise<string[]> {
      const rows = await db
        .update(sessions)
        .set({ revokedAt: new Date() })
        .where(and(eq(sessions.userId, userId), isNull(sessions.revokedAt), ...(exceptJti ? [ne(sessions.jti, exceptJti)] : [])))
        .returning({ jti: sessions.jti });
      return rows.map((r) => r.jti);
    },
  };
}

/**
 * How long the parsed site settings are reused, ms: they are read by every list that shows due
 * dates (the site's time zone) and change only through {@link siteRepository}'s own writes, which
 * drop the copy at once. One process per database (its lock), so no other process writes them.
 */
const SITE_SETTINGS_CACHE_MS = 5_000;
const siteSettingsCache = new WeakMap<Db, { value: SiteSettings; until: number }>();

export function siteRepository(db: Db) {
  return {
    async get(): Promise<SiteRow | undefined> {
      const [row] = await db.select().from(sites).limit(1);
      return row;
    },
    async create(values: typeof sites.$inferInsert): Promise<SiteRow> {
      siteSettingsCache.delete(db);
      const [row] = await db.insert(sites).values(values).returning();
      return row!;
    },
    /** The site's settings parsed with SiteSettingsSchema (defaults where absent or invalid). */
    async settings(): Promise<SiteSettings> {
      const hit = siteSettingsCache.get(db);
      if (hit && hit.until > Date.now()) return structuredClone(hit.value);
      const [row] = await db.select({ settings: sites.settings }).from(sites).limit(1);
      const value = parseSiteSettings(row?.settings);
      siteSettingsCache.set(db, { value: structuredClone(value), until: Date.now() + SITE_SETTINGS_CACHE_MS });
      return value;
    },
    async updateSettings(id: string, settings: string): Promise<void> {
      siteSettingsCache.delete(db);
      await db.update(sites).set({ settings }).where(eq(sites.id, id));
      siteSettingsCache.delete(db);
    },
  };
}
