/**
 * Security proof, sign-in side: the role matrix of every HTTP route and every WebSocket client
 * message, session tokens that must be refused (expired, `alg: none`, wrong audience or issuer,
 * wrong key, revoked, a forged role claim) and cookie attributes. Requests from outside (cross-site,
 * the sign-in rate limit, uploads, security headers): `security-requests.test.ts`.
 */
import { SignJWT, UnsecuredJWT, decodeJwt } from 'jose';
import { describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { allows } from '../../server/http/policy';
import { ApiClient, DEMO_PASSWORD, demoEmail } from '../helpers/test-server';
import { expectErrorBody, rawRequest, ROLES, routesOf, sleep } from '../helpers/proof-helpers';
import { SECRET, useSecurityServer } from '../helpers/security-server';

const key = new TextEncoder().encode(SECRET);
const SAMPLE_ID = '00000000-0000-4000-8000-000000000000';

const ctx = useSecurityServer();

const tokenOf = (c: ApiClient) => c.cookie.replace(/^sp_session=/, '');
const withToken = (token: string) => ({ cookie: `sp_session=${token}` });

/** Opens /ws; resolves with the first message, or with the HTTP status of a refused upgrade. */
function openWs(headers: Record<string, string>, query = ''): Promise<{ ws?: WebSocket; first?: { type: string }; status?: number; body?: string }> {
  return new Promise((resolve, reject) => {
    const ws = new WebSocket(`${ctx.srv.url.replace('http', 'ws')}/ws${query}`, { headers });
    ws.once('unexpected-response', (_req, res) => {
      let body = '';
      res.on('data', (d: Buffer) => (body += d));
      res.on('end', () => resolve({ status: res.statusCode, body }));
    });
    ws.once('message', (d) => resolve({ ws, first: JSON.parse(String(d)) as { type: string } }));
    ws.once('error', (e) => {
      if (!/Unexpected server response/.test(e.message)) reject(e);
    });
  });
}

describe('role matrix', () => {
  it('refuses exactly what the policy table refuses, on every route, for every role and signed out', async () => {
    const signedOut = new ApiClient(ctx.srv.url);
    const checked: string[] = [];
    for (const spec of routesOf(ctx.srv)) {
      if (spec.path === '/api/auth/login' || spec.path === '/api/auth/logout') continue; // own tests below
      for (const who of [...ROLES, 'signed-out'] as const) {
        const c = who === 'signed-out' ? signedOut : ctx.clients[who];
        const r = await c.req(spec.method.toUpperCase(), spec.path.replace(/:[a-zA-Z]+/g, (m) => (m === ':id' ? SAMPLE_ID : '0')), spec.method === 'get' ? undefined : {});
        const label = `${spec.method.toUpperCase()} ${spec.path} as ${who}: ${r.status}`;
        expect(r.status, label).toBeLessThan(500);
        if (spec.action === null) expect(r.status, label).not.toBe(401);
        else if (who === 'signed-out') expect(r.status, label).toBe(401);
        else if (allows(spec.action, who)) expect([401, 403], label).not.toContain(r.status);
        else {
          expect(r.status, label).toBe(403);
          expect(r.body.error.code, label).toBe('forbidden');
        }
        checked.push(label);
      }
    }
    console.log(`security: role matrix checked ${checked.length} route × role pairs`);
    // The account routes of issue 14 are in the matrix (they are read from the app, so this guards their mounting).
    const mounted = routesOf(ctx.srv).map((r) => `${r.method} ${r.path}`);
    expect(mounted).toEqual(expect.arrayContaining(['post /api/auth/password', 'post /api/users/:id/reset-password', 'post /api/users/:id/unlock']));
    expect(checked.length).toBeGreaterThan(150);
  });
});

describe('WebSocket /ws', () => {
  it('refuses a signed-out upgrade, a foreign Origin and a revoked session', async () => {
    const out = await openWs({});
    expect(out.status).toBe(401);
    expect(JSON.parse(out.body!).error.code).toBe('unauthenticated');
    const foreign = await openWs({ ...withToken(tokenOf(ctx.clients.lead)), origin: 'http://evil.example' });
    expect(foreign.status).toBe(403);
    const c = new ApiClient(ctx.srv.url);
    await c.login(demoEmail('auditor'));
    const token = tokenOf(c);
    await c.post('/api/auth/logout');
    expect((await openWs(withToken(token))).status).toBe(401);
    const junk = await openWs({ cookie: 'sp_session=not.a.token' });
    expect(junk.status).toBe(401);
  });

  it('opens /ws for a registered bench agent token only, never a made-up, malformed or revoked one (nor falls back to the cookie)', async () => {
    const reg = await ctx.clients.lead.post('/api/benches', { id: 'proof-agent', label: 'Proof bench' });
    expect(reg.status).toBe(201);
    const token = reg.body.token as string;
    for (const bad of ['Bearer spb_made-up', 'Bearer', `Basic ${token}`, `Bearer ${token}x`, `Bearer ${token.slice(0, -1)}`]) {
      const r = await openWs({ authorization: bad, ...withToken(tokenOf(ctx.clients.lead)) });
      expect(r.status, bad).toBe(401);
    }
    const ok = await openWs({ authorization: `Bearer ${token}` });
    expect(ok.first?.type).toBe('stream.opened');
    const closed = new Promise<number>((r) => ok.ws!.once('close', (code) => r(code)));
    expect((await ctx.clients.admin.post('/api/benches/proof-agent/revoke')).status).toBe(200);
    expect(await closed).toBe(4403);
    expect((await openWs({ authorization: `Bearer ${token}` })).status).toBe(401);
  });

  it.each(ROLES)('lets the %s role subscribe and watch, and forward lines only to its own browser bench if the policy allows it', async (role) => {
    const { ws, first } = await openWs({ ...withToken(tokenOf(ctx.clients[role])), origin: ctx.srv.url });
    expect(first?.type).toBe('stream.opened');
    const acks: { batchSeq: number; status: string }[] = [];
    ws!.on('message', (d) => {
      const m = JSON.parse(String(d)) as { type: string; batchSeq: number; status: string };
      if (m.type === 'lines.acked') acks.push(m);
    });
    ws!.send(JSON.stringify({ type: 'watch', runId: null }));
    const own = `browser-${(await ctx.clients[role].get('/api/auth/me')).body.id}`;
    const made = `proof-forward-${role}`;
    const forward = (benchId: string, batchSeq: number) =>
      ws!.send(JSON.stringify({ type: 'lines.forwarded', benchId, senderId: `proof-${role}`, batchSeq, sentWallMs: Date.now(), lines: [{ device: 'current', raw: '+1.200000E-02', wallMs: Date.now() }] }));
    forward(own, 1);
    // A made-up bench name and this server's own bench: refused for every role.
    forward(made, 2);
    forward('bench-1', 3);
    // Junk must be ignored without closing the stream or hurting the server.
    for (const junk of ['{', '[]', '{"type":"nope"}', JSON.stringify({ type: 'lines.forwarded', benchId: 'x'.repeat(500), lines: 'no' }), '\u0000', JSON.stringify({ type: 'watch', runId: { $ne: 1 } })]) ws!.send(junk);
    ws!.send(Buffer.from([0xff, 0x00, 0x13]), { binary: true });
    const end = Date.now() + 10_000;
    while (acks.length < 3 && Date.now() < end) await sleep(50);
    expect(ws!.readyState).toBe(WebSocket.OPEN);
    expect(acks.map((a) => [a.batchSeq, a.status])).toEqual([
      [1, allows('jobs.perform', role) ? 'stored' : 'refused'],
      [2, 'refused'],
      [3, 'refused'],
    ]);
    const benches = ((await ctx.clients.lead.get('/api/bench')).body.benches as { benchId: string }[]).map((b) => b.benchId);
    expect(benches.includes(own), `${role} forwarding lines`).toBe(allows('jobs.perform', role));
    expect(benches.includes(made), `${role} naming a bench`).toBe(false);
    // A message beyond the 64 KiB limit closes the connection (1009), not the server.
    const closed = new Promise<number>((r) => ws!.once('close', (code) => r(code)));
    ws!.send('x'.repeat(70 * 1024));
    expect(await closed).toBe(1009);
    expect((await ctx.clients.lead.get('/api/health')).status).toBe(200);
  });
});

describe('session tokens', () => {
  async function forge(base: ApiClient, edit: (j: SignJWT) => SignJWT, payload: Record<string, unknown> = {}, secret = key, alg = 'HS256') {
    const p = decodeJwt(tokenOf(base));
    const j = new SignJWT({ role: p.role, ...payload })
      .setProtectedHeader({ alg, typ: 'JWT' })
      .setSubject(p.sub!)
      .setJti(p.jti!)
      .setIssuer('stillpoint')
      .setAudience('stillpoint-web')
      .setIssuedAt()
      .setExpirationTime(p.exp!);
    return edit(j).sign(secret);
  }
  const me = (token: string) => rawRequest(ctx.srv.url, { method: 'GET', path: '/api/auth/me', headers: withToken(token) });

  it('accepts the real token and a faithful re-signing of it (the test forges with the right key)', async () => {
    expect((await me(tokenOf(ctx.clients.lead))).status).toBe(200);
    expect((await me(await forge(ctx.clients.lead, (j) => j))).status).toBe(200);
  });

  it.each([
    ['expired', (j: SignJWT) => j.setIssuedAt(Math.floor(Date.now() / 1000) - 7200).setExpirationTime(Math.floor(Date.now() / 1000) - 60)],
    ['wrong audience', (j: SignJWT) => j.setAudience('someone-else')],
    ['wrong issuer', (j: SignJWT) => j.setIssuer('not-stillpoint')],
    ['not yet valid', (j: SignJWT) => j.setNotBefore(Math.floor(Date.now() / 1000) + 3600)],
    ['unknown session id', (j: SignJWT) => j.setJti('00000000-dead-4000-8000-000000000000')],
  ])('refuses a token with %s', async (_what, edit) => {
    const r = await me(await forge(ctx.clients.lead, edit));
    expect(r.status).toBe(401);
    expectErrorBody(r, _what);
    expect((r.json as { error: { code: string } }).error.code).toBe('unauthenticated');
  });

  it('refuses an expired token with a message that says so', async () => {
    const r = await me(await forge(ctx.clients.lead, (j) => j.setExpirationTime(Math.floor(Date.now() / 1000) - 1)));
    expect(r.status).toBe(401);
    expect((r.json as { error: { message: string } }).error.message).toMatch(/expired/);
  });

  it('refuses alg none, another algorithm, another key and a tampered signature', async () => {
    const p = decodeJwt(tokenOf(ctx.clients.admin));
    const none = new UnsecuredJWT({ role: 'admin' }).setSubject(p.sub!).setJti(p.jti!).setIssuer('stillpoint').setAudience('stillpoint-web').setExpirationTime('1h').encode();
    expect((await me(none)).status).toBe(401);
    expect((await me(await forge(ctx.clients.admin, (j) => j, {}, key, 'HS512'))).status).toBe(401);
    expect((await me(await forge(ctx.clients.admin, (j) => j, {}, new TextEncoder().encode('another-secret-that-is-long-enough-000')))).status).toBe(401);
    const [h, b, s] = tokenOf(ctx.clients.admin).split('.');
    expect((await me(`${h}.${b}.${s!.slice(0, -2)}${s!.endsWith('AA') ? 'BB' : 'AA'}`)).status).toBe(401);
    expect((await me(`${h}.${b}.`)).status).toBe(401);
  });

  it('takes the role from the database, never from the token: a technician token claiming admin stays a technician', async () => {
    const forged = await forge(ctx.clients.technician, (j) => j, { role: 'admin' });
    const r = await rawRequest(ctx.srv.url, { method: 'GET', path: '/api/users', headers: withToken(forged) });
    expect(r.status).toBe(403);
  });

  it('refuses a revoked session (signed out) on HTTP', async () => {
    const c = new ApiClient(ctx.srv.url);
    await c.login(demoEmail('lead'));
    const token = tokenOf(c);
    expect((await c.post('/api/auth/logout')).status).toBe(204);
    expect((await me(token)).status).toBe(401);
  });
});

describe('session cookie', () => {
  const login = (headers: Record<string, string> = {}) =>
    fetch(`${ctx.srv.url}/api/auth/login`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', origin: ctx.srv.url, ...headers },
      body: JSON.stringify({ email: demoEmail('lead'), password: DEMO_PASSWORD }),
    });

  it('is HttpOnly, SameSite=Lax, Path=/, not Secure over plain HTTP, and lives 12 hours', async () => {
    const c = (await login()).headers.getSetCookie().find((x) => x.startsWith('sp_session='))!;
    expect(c).toMatch(/;\s*HttpOnly/i);
    expect(c).toMatch(/;\s*SameSite=Lax/i);
    expect(c).toMatch(/;\s*Path=\/(;|$)/);
    expect(c).not.toMatch(/;\s*Secure/i);
    expect(Number(/Max-Age=(\d+)/i.exec(c)![1])).toBe(12 * 3600);
  });

  it('is not made Secure by an X-Forwarded-Proto header when no proxy is trusted (TRUST_PROXY unset)', async () => {
    // tests/integration/safe-start.test.ts shows the header believed with TRUST_PROXY=loopback.
    const res = await login({ 'x-forwarded-proto': 'https' });
    expect(res.status).toBe(200);
    const c = res.headers.getSetCookie().find((x) => x.startsWith('sp_session='))!;
    expect(c).not.toMatch(/;\s*Secure/i);
    expect(c).toMatch(/;\s*HttpOnly/i);
  });

  it('is cleared on sign-out with the same attributes', async () => {
    const c = new ApiClient(ctx.srv.url);
    await c.login(demoEmail('lead'));
    const res = await fetch(`${ctx.srv.url}/api/auth/logout`, { method: 'POST', headers: { origin: ctx.srv.url, cookie: c.cookie } });
    const cleared = res.headers.getSetCookie().find((x) => x.startsWith('sp_session='))!;
    expect(cleared).toMatch(/^sp_session=;/);
    expect(cleared).toMatch(/Expires=Thu, 01 Jan 1970/i);
    expect(cleared).toMatch(/Path=\//);
  });
});
