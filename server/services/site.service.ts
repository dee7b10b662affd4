import type { Db } from '../db/client';
import { siteRepository } from '../db/repositories/user.repository';
import { notFound } from '../errors';
import { DEFAULT_TIME_ZONE } from '../../shared/format/dates';
import type { SiteSettings } from '../../shared/schemas/settings';
import type { Actor, AuditService } from './audit.service';

/** The site's settings as an admin sees and changes them (the time zone for now), audited. */
export function createSiteService(db: Db, audit: AuditService) {
  const sites = siteRepository(db);
  return {
    async settings(): Promise<SiteSettings & { timeZone: string }> {
      const s = await sites.settings();
      return { ...s, timeZone: s.timeZone ?? DEFAULT_TIME_ZONE };
    },
    /** Sets the site's time zone: dates are shown, and "today" taken, in it from now on. */
    async setTimeZone(actor: Actor, timeZone: string): Promise<{ timeZone: string }> {
      const site = await sites.get();
      if (!site) throw notFound('No site is set up');
      const raw = JSON.parse(site.settings || '{}') as Record<string, unknown>;
      const before = typeof raw.timeZone === 'string' ? raw.timeZone : DEFAULT_TIME_ZONE;
      await sites.updateSettings(site.id, JSON.stringify({ ...raw, timeZone }));
      await audit.record(actor, 'site.time-zone-changed', 'site', site.id, { timeZone: before }, { timeZone });
      return { timeZone };
    },
  };
}
export type SiteService = ReturnType<typeof createSiteService>;
