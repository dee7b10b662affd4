import { SiteTimeZoneBodySchema } from '../../../../shared/schemas/settings';
import type { SiteService } from '../../../services/site.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** Site settings (admin): read them, and set the time zone dates are shown and "today" is taken in. */
export function siteRoutes(site: SiteService) {
  const t = routeTable('/api/site');
  t.add('get', '/settings', 'settings.manage', async (_req, res) => {
    res.json(await site.settings());
  });
  const tz = { body: SiteTimeZoneBodySchema };
  t.add('put', '/time-zone', 'settings.manage', validate(tz), async (_req, res) => {
    res.json(await site.setTimeZone(currentUser(res), input(res, tz).body.timeZone));
  });
  return t;
}
