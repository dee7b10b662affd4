import type { Db } from '../db/client';
import { siteRepository } from '../db/repositories/user.repository';
import { DEFAULT_TIME_ZONE, dateInZone, todayInZone } from '../../shared/format/dates';

/**
 * The site's clock: its time zone (a site setting) and "today" in that zone — the same
 * `todayInZone` the client runs, so server and screen agree on a standard's due state and on the
 * calibration date near midnight. `now` is injectable for tests.
 */
export function createSiteClock(db: Db, now: () => Date = () => new Date()) {
  const sites = siteRepository(db);
  const clock = {
    /** The site's IANA time zone ('UTC' until the site sets one). */
    async zone(): Promise<string> {
      return (await sites.settings()).timeZone ?? DEFAULT_TIME_ZONE;
    },
    /** Today's date (YYYY-MM-DD) in the site's zone. */
    async today(): Promise<string> {
      return todayInZone(await clock.zone(), now());
    },
    /** The calendar date (YYYY-MM-DD) of an instant in the site's zone. */
    async dateOf(at: Date): Promise<string> {
      return dateInZone(at, await clock.zone());
    },
  };
  return clock;
}
export type SiteClock = ReturnType<typeof createSiteClock>;
