import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { siteRepository } from '../../server/db/repositories/user.repository';
import { createSiteClock } from '../../server/services/site-clock';
import { addDays, dueState } from '../../shared/format/dates';
import { daysUntil, setSiteTimeZone, siteToday } from '../../src/lib/format';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

/**
 * "Today" is the site's today, on the server and in the browser alike (issue 13, item 5): both
 * run shared/format's `todayInZone` with the zone the site sets, so near midnight they agree on
 * whether a standard is expired — where the server once took the UTC date and the client the
 * browser's local date.
 */
let server: TestServer;
let admin: ApiClient;

async function setZone(zone: string | undefined) {
  const sites = siteRepository(server.database.db);
  const site = (await sites.get())!;
  const settings = JSON.parse(site.settings ?? '{}') as Record<string, unknown>;
  if (zone === undefined) delete settings.timeZone;
  else settings.timeZone = zone;
  await sites.updateSettings(site.id, JSON.stringify(settings));
}

beforeAll(async () => {
  server = await startTestServer();
  admin = new ApiClient(server.url);
  await admin.login(demoEmail('admin'));
});
afterAll(async () => {
  setSiteTimeZone(undefined);
  await server?.close();
});

describe('the site clock near midnight', () => {
  // Instants either side of the site's midnight, for zones east and west of UTC (DST included).
  const cases: Array<[zone: string, instant: string, siteDate: string]> = [
    ['Pacific/Auckland', '2026-12-02T10:59:00Z', '2026-12-02'], // 23:59 NZDT
    ['Pacific/Auckland', '2026-12-02T11:00:00Z', '2026-12-03'], // 00:00 NZDT, UTC still on the 2nd
    ['America/Chicago', '2026-12-03T05:59:00Z', '2026-12-02'], // 23:59 CST, UTC already on the 3rd
    ['America/Chicago', '2026-12-03T06:00:00Z', '2026-12-03'],
    ['Europe/London', '2026-06-28T22:59:00Z', '2026-06-28'], // 23:59 BST
    ['Europe/London', '2026-06-28T23:00:00Z', '2026-06-29'], // 00:00 BST, UTC still on the 28th
    ['UTC', '2026-12-02T23:59:59Z', '2026-12-02'],
  ];

  it.each(cases)('server and client agree on today in %s at %s', async (zone, instant, siteDate) => {
    await setZone(zone);
    const now = new Date(instant);
    const serverToday = await createSiteClock(server.database.db, () => now).today();
    // The client's zone comes from the session, as the browser receives it.
    const me = (await admin.get('/api/auth/me')).body as { timeZone?: string };
    expect(me.timeZone).toBe(zone);
    setSiteTimeZone(me.timeZone);
    const clientToday = siteToday(now);
    expect(serverToday).toBe(siteDate);
    expect(clientToday).toBe(serverToday);
    // A standard due on the UTC date is judged alike by both (dueState runs on the same today).
    const dueOn = instant.slice(0, 10);
    expect(dueState(dueOn, clientToday)).toBe(dueState(dueOn, serverToday));
    expect(daysUntil(dueOn, clientToday)).toBe(daysUntil(dueOn, serverToday));
  });

  it('the API states due states by the site zone, and the screen computes the same today from /api/auth/me', async () => {
    // A zone whose date differs from UTC's right now: UTC+14 once UTC is past 10:00, UTC−12 before 12:00.
    const hour = new Date().getUTCHours();
    const zone = hour >= 10 ? 'Pacific/Kiritimati' : 'Etc/GMT+12';
    const utcToday = new Date().toISOString().slice(0, 10);
    const siteDate = hour >= 10 ? addDays(utcToday, 1) : addDays(utcToday, -1);
    await setZone(zone);
    const me = (await admin.get('/api/auth/me')).body as { timeZone?: string };
    setSiteTimeZone(me.timeZone);
    const clientToday = siteToday();
    if (clientToday !== siteDate) return expect.fail(`the minute turned during the test (${clientToday} vs ${siteDate}); run again`);

    // A standard due on the UTC date: expired in a zone already on tomorrow, due soon in one still on yesterday.
    const list = (await admin.get('/api/standards?pageSize=500')).body as { items: Array<{ id: string } & Record<string, unknown>> };
    const s = list.items.find((x) => x.kind === 'pressure')!;
    const { id, dueState: _d, createdAt: _c, updatedAt: _u, certificateFileId: _f, laboratory: _l, ...rest } = s as Record<string, unknown>;
    const put = await admin.req('PUT', `/api/standards/${String(id)}`, { ...rest, dueOn: utcToday });
    expect(put.status, JSON.stringify(put.body)).toBe(200);
    const shown = (await admin.get(`/api/standards/${String(id)}`)).body as { dueOn: string; dueState: string };
    expect(shown.dueOn).toBe(utcToday);
    expect(shown.dueState).toBe(dueState(utcToday, clientToday));
    expect(shown.dueState).toBe(hour >= 10 ? 'expired' : 'due-soon');
    expect(daysUntil(shown.dueOn)).toBe(hour >= 10 ? -1 : 1);
  });

  it('falls back to UTC when the site sets no zone, and drops an unknown one', async () => {
    await setZone(undefined);
    expect(((await admin.get('/api/auth/me')).body as { timeZone?: string }).timeZone).toBe('UTC');
    await setZone('Atlantis/Capital');
    expect(((await admin.get('/api/auth/me')).body as { timeZone?: string }).timeZone).toBe('UTC');
    expect(await createSiteClock(server.database.db, () => new Date('2026-12-02T23:30:00Z')).today()).toBe('2026-12-02');
  });

  it('lets an admin set the zone (audited), refuses others, and explains a bad zone', async () => {
    const leadClient = new ApiClient(server.url);
    await leadClient.login(demoEmail('lead'));
    expect((await leadClient.req('PUT', '/api/site/time-zone', { timeZone: 'Europe/London' })).status).toBe(403);
    const bad = await admin.req('PUT', '/api/site/time-zone', { timeZone: 'Europe/Atlantis' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.timeZone).toEqual(['Choose a known time zone, e.g. Europe/London']);
    expect((await admin.req('PUT', '/api/site/time-zone', {})).status).toBe(400);
    const ok = await admin.req('PUT', '/api/site/time-zone', { timeZone: 'Europe/London' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(((await admin.get('/api/site/settings')).body as { timeZone: string }).timeZone).toBe('Europe/London');
    expect(((await leadClient.get('/api/auth/me')).body as { timeZone: string }).timeZone).toBe('Europe/London');
    const audit = (await admin.get('/api/audit')).body as { items?: Array<{ action: string; after?: unknown }> } | Array<{ action: string }>;
    const items = Array.isArray(audit) ? audit : (audit.items ?? []);
    expect(items.some((e) => e.action === 'site.time-zone-changed')).toBe(true);
  });
});
