import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
beforeAll(async () => {
  srv = await startTestServer();
});
afterAll(async () => {
  await srv?.close();
});

describe('foundation: health, sign-in, roles, errors', () => {
  it('answers health with the storage and bench kinds', async () => {
    const r = await new ApiClient(srv.url).get('/api/health');
    expect(r.status).toBe(200);
    expect(r.body).toMatchObject({ ok: true, status: 'ok', reasons: [], db: process.env.TEST_DATABASE_URL ? 'postgres' : 'pglite', bench: 'sim', database: { ok: true } });
  });

  it.each(['tech', 'lead', 'admin', 'auditor'] as const)('signs in the demo %s user and reads /me', async (who) => {
    const c = new ApiClient(srv.url);
    const me = await c.login(demoEmail(who));
    expect(me.email).toBe(demoEmail(who));
    expect(c.cookie).toMatch(/^sp_session=/);
    const again = await c.get('/api/auth/me');
    expect(again.status).toBe(200);
    expect(again.body.role).toBe({ tech: 'technician', lead: 'lead', admin: 'admin', auditor: 'auditor' }[who]);
  });

  it('sets the session cookie httpOnly and SameSite, never readable by scripts', async () => {
    const res = await fetch(`${srv.url}/api/auth/login`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', origin: srv.url },
      body: JSON.stringify({ email: demoEmail('lead'), password: 'stillpoint-demo' }),
    });
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith('sp_session='))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    expect(cookie).not.toMatch(/Secure/i); // plain HTTP here; Secure is set when served over HTTPS
  });

  it('gives a technician 403 on /api/users and a signed-out request 401', async () => {
    const tech = new ApiClient(srv.url);
    await tech.login(demoEmail('tech'));
    const r = await tech.get('/api/users');
    expect(r.status).toBe(403);
    expect(r.body.error.code).toBe('forbidden');
    const anon = await new ApiClient(srv.url).get('/api/users');
    expect(anon.status).toBe(401);
    expect(anon.body.error.code).toBe('unauthenticated');
  });

  it('answers a wrong password with 401 and repeated failures with 429', async () => {
    const c = new ApiClient(srv.url);
    const email = demoEmail('auditor');
    const codes: number[] = [];
    for (let i = 0; i < 7; i++) codes.push((await c.post('/api/auth/login', { email, password: `wrong-${i}-password` })).status);
    expect(codes.slice(0, 5)).toEqual([401, 401, 401, 401, 401]);
    expect(codes.slice(5)).toEqual([429, 429]);
    const audit = new ApiClient(srv.url);
    await audit.login(demoEmail('admin'));
    const trail = await audit.get('/api/audit?limit=1000');
    expect(trail.body.items.filter((e: { action: string }) => e.action === 'auth.sign-in-failed').length).toBeGreaterThanOrEqual(5);
  });

  it('revokes the session on logout: the old cookie no longer works', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('lead'));
    const saved = c.cookie;
    expect((await c.post('/api/auth/logout')).status).toBe(204);
    const replay = await fetch(`${srv.url}/api/auth/me`, { headers: { cookie: saved } });
    expect(replay.status).toBe(401);
  });

  it('refuses a state-changing request from another origin', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('admin'));
    const r = await c.req('POST', '/api/users', { email: 'x@y.test', name: 'X', role: 'lead', password: 'a-long-enough-pass' }, { origin: 'http://evil.example' });
    expect(r.status).toBe(403);
    expect(r.body.error.code).toBe('cross_site');
  });

  it('returns 400 with field errors from zod and writes nothing', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('admin'));
    const before = (await c.get('/api/users')).body.items.length;
    const r = await c.post('/api/users', { email: 'not-an-email', name: '', role: 'boss', password: 'short' });
    expect(r.status).toBe(400);
    expect(r.body.error.code).toBe('validation_failed');
    expect(Object.keys(r.body.error.fields).sort()).toEqual(['email', 'name', 'password', 'role']);
    const common = await c.post('/api/users', { email: 'new@x.test', name: 'New', role: 'lead', password: 'password1234' });
    expect(common.status).toBe(400);
    expect(common.body.error.fields.password[0]).toMatch(/common/);
    expect((await c.get('/api/users')).body.items.length).toBe(before);
  });

  it('lets an admin invite, change the role of and deactivate a user', async () => {
    const admin = new ApiClient(srv.url);
    await admin.login(demoEmail('admin'));
    const created = await admin.post('/api/users', { email: 'rowan@stillpoint-demo.test', name: 'Rowan Quell', role: 'technician', password: 'violet-harbour-71' });
    expect(created.status).toBe(201);
    const u = new ApiClient(srv.url);
    await u.login('rowan@stillpoint-demo.test', 'violet-harbour-71');
    const changed = await admin.req('PATCH', `/api/users/${created.body.id}`, { role: 'lead' });
    expect(changed.body.role).toBe('lead');
    // A role change ends the person's sessions.
    expect((await u.get('/api/auth/me')).status).toBe(401);
    await admin.req('PATCH', `/api/users/${created.body.id}`, { active: false });
    const denied = await new ApiClient(srv.url).post('/api/auth/login', { email: 'rowan@stillpoint-demo.test', password: 'violet-harbour-71' });
    expect(denied.status).toBe(401);
  });

  it('serves the demo registers: a dozen tags, four standards with one expired and one due soon', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('tech'));
    const inst = await c.get('/api/instruments?pageSize=100');
    expect(inst.body.total).toBe(12);
    const std = await c.get('/api/standards');
    const states = std.body.items.map((s: { dueState: string }) => s.dueState).sort();
    expect(states).toEqual(['due-soon', 'expired', 'in-date', 'in-date']);
    const jobs = await c.get('/api/jobs');
    expect(jobs.body.items.some((j: { overdue: boolean }) => j.overdue)).toBe(true);
    // A technician's own jobs come first.
    const me = (await c.get('/api/auth/me')).body;
    expect(jobs.body.items[0].assigneeId).toBe(me.id);
  });

  it('answers unknown API routes with a JSON 404 and bad JSON with a 400', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('tech'));
    expect((await c.get('/api/nothing-here')).body.error.code).toBe('not_found');
    const bad = await c.req('POST', '/api/calc/evaluate', '{"instrument":', { 'content-type': 'application/json' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('bad_request');
  });
});
