/**
 * Security proof, requests from outside: cross-site refusal, the sign-in rate limit, upload limits
 * and file names, and the security headers. Roles, tokens and cookies: `security.test.ts`.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ApiClient, DEMO_PASSWORD, demoEmail } from '../helpers/test-server';
import { expectErrorBody, rawRequest, routesOf, rowCounts } from '../helpers/proof-helpers';
import { useSecurityServer } from '../helpers/security-server';

const ctx = useSecurityServer();

describe('cross-site requests', () => {
  const invite = { email: 'xsite@stillpoint-demo.test', name: 'X Site', role: 'lead', password: 'violet-harbour-71' };
  it.each([
    ['a foreign Origin', { origin: 'http://evil.example' }],
    ['Origin null', { origin: 'null' }],
    ['a look-alike Origin', { origin: 'http://127.0.0.1.evil.example' }],
    ['a foreign Referer and no Origin', { referer: 'http://evil.example/page' }],
    ['an unparseable Referer', { referer: 'not a url' }],
    ['neither Origin nor Referer, with a session cookie', {}],
  ])('refuses a state-changing request with %s, and writes nothing', async (_what, headers) => {
    const before = await rowCounts(ctx.srv, ctx.tracked);
    const r = await rawRequest(ctx.srv.url, {
      method: 'POST',
      path: '/api/users',
      headers: { 'content-type': 'application/json', cookie: ctx.clients.admin.cookie, ...headers },
      body: JSON.stringify(invite),
    });
    expect(r.status).toBe(403);
    expect((r.json as { error: { code: string } }).error.code).toBe('cross_site');
    expect(await rowCounts(ctx.srv, ctx.tracked)).toEqual(before);
  });

  it('refuses a foreign Host header (DNS rebinding) before anything else, even with a matching Origin', async () => {
    const before = await rowCounts(ctx.srv, ctx.tracked);
    const r = await rawRequest(ctx.srv.url, {
      method: 'POST',
      path: '/api/users',
      headers: { host: 'rebound.example', origin: 'http://rebound.example', 'content-type': 'application/json', cookie: ctx.clients.admin.cookie },
      body: JSON.stringify(invite),
    });
    expect(r.status).toBe(421);
    expectErrorBody(r, 'foreign Host');
    expect(await rowCounts(ctx.srv, ctx.tracked)).toEqual(before);
  });

  it('accepts the own Referer, and safe methods from anywhere', async () => {
    const r = await rawRequest(ctx.srv.url, { method: 'POST', path: '/api/calc/evaluate', headers: { 'content-type': 'application/json', cookie: ctx.clients.lead.cookie, referer: `${ctx.srv.url}/queue` }, body: '{}' });
    expect(r.status).toBe(400); // past the guard, stopped by validation
    const g = await rawRequest(ctx.srv.url, { method: 'GET', path: '/api/jobs', headers: { cookie: ctx.clients.lead.cookie, origin: 'http://evil.example' } });
    expect(g.status).toBe(200);
    expect(g.headers['access-control-allow-origin']).toBeUndefined(); // no CORS: another site cannot read it
  });
});

describe('sign-in rate limit', () => {
  // The address limit, X-Forwarded-For rotation and lifting a lock: tests/integration/accounts.test.ts.
  it('answers 429 after five failures for an account, even to the right password, and not for another account', async () => {
    const email = demoEmail('tech2');
    const codes: number[] = [];
    for (let i = 0; i < 6; i++) codes.push((await new ApiClient(ctx.srv.url).post('/api/auth/login', { email, password: `wrong-password-${i}` })).status);
    expect(codes).toEqual([401, 401, 401, 401, 401, 429]);
    const right = await new ApiClient(ctx.srv.url).post('/api/auth/login', { email, password: DEMO_PASSWORD });
    expect(right.status).toBe(429);
    expect(right.body.error.code).toBe('rate_limited');
    expect(right.headers.get('ratelimit') ?? right.headers.get('ratelimit-policy')).toBeTruthy();
    expect((await new ApiClient(ctx.srv.url).post('/api/auth/login', { email: demoEmail('auditor'), password: DEMO_PASSWORD })).status).toBe(200);
  });
});

describe('uploads', () => {
  // The CSV imports: the file uploads (certificates, datasheets, photos) have their own checks in
  // tests/integration/records-uploads.test.ts (type by content, size, nothing left behind, traversal).
  const uploadRoutes = () => routesOf(ctx.srv).filter((r) => r.method === 'post' && /\/import$/.test(r.path));
  const MPB = 'proofB0undary';
  const form = (parts: { name: string; filename?: string; type?: string; data: Buffer | string }[]) =>
    Buffer.concat([
      ...parts.flatMap((p) => [
        Buffer.from(`--${MPB}\r\nContent-Disposition: form-data; name="${p.name}"${p.filename !== undefined ? `; filename="${p.filename}"` : ''}\r\n${p.type ? `Content-Type: ${p.type}\r\n` : ''}\r\n`),
        Buffer.isBuffer(p.data) ? p.data : Buffer.from(p.data),
        Buffer.from('\r\n'),
      ]),
      Buffer.from(`--${MPB}--\r\n`),
    ]);
  const post = (p: string, body: Buffer, type = `multipart/form-data; boundary=${MPB}`) =>
    rawRequest(ctx.srv.url, { method: 'POST', path: p, headers: { 'content-type': type, origin: ctx.srv.url, cookie: ctx.clients.lead.cookie }, body });

  it('has CSV import routes to test', () => {
    expect(uploadRoutes().map((r) => r.path)).toEqual(expect.arrayContaining(['/api/instruments/import', '/api/standards/import']));
  });

  it('refuses too large, binary, misnamed and doubled files on every upload route with a 4xx, writing nothing', async () => {
    for (const r of uploadRoutes()) {
      const before = await rowCounts(ctx.srv, ctx.tracked);
      const cases: [string, Buffer, number[], string?][] = [
        ['too large', form([{ name: 'file', filename: 'big.csv', type: 'text/csv', data: 'a,'.repeat(1_100_000) }]), [413]],
        ['too large as text/csv', Buffer.from('a,'.repeat(1_100_001)), [413], 'text/csv'],
        ['binary (PNG bytes)', form([{ name: 'file', filename: 'x.csv', type: 'text/csv', data: Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0]) }]), [415]],
        ['not UTF-8', form([{ name: 'file', filename: 'x.csv', type: 'text/csv', data: Buffer.from([0x74, 0x61, 0x67, 0x0a, 0xff, 0xfe, 0xc3, 0x28]) }]), [415]],
        ['a NUL byte', form([{ name: 'file', filename: 'x.csv', type: 'text/csv', data: 'tag\u0000\nFT-1' }]), [415]],
        ['the wrong field', form([{ name: 'upload', filename: 'x.csv', type: 'text/csv', data: 'tag\nFT-1' }]), [400]],
        ['two files', form([{ name: 'file', filename: 'a.csv', data: 'tag\nA' }, { name: 'file', filename: 'b.csv', data: 'tag\nB' }]), [400]],
        ['a truncated form', form([{ name: 'file', filename: 'a.csv', data: 'tag\nA' }]).subarray(0, 50), [400]],
      ];
      for (const [what, body, expected, type] of cases) {
        const res = await post(r.path, body, type);
        expect(expected, `${r.path} with ${what}: ${res.status} ${res.text.slice(0, 200)}`).toContain(res.status);
        expectErrorBody(res, `${r.path} with ${what}`);
      }
      expect(await rowCounts(ctx.srv, ctx.tracked), r.path).toEqual(before);
    }
  });

  it('never uses the file name as a path (traversal names are harmless)', async () => {
    const dataDir = path.resolve('.tmp/unused');
    const names = ['../../../../tmp/proof-evil.csv', '..\\..\\proof-evil.csv', '/tmp/proof-evil-abs.csv', 'proof\u0000evil.csv'];
    for (const r of uploadRoutes()) {
      for (const filename of names) {
        const res = await post(r.path, form([{ name: 'file', filename, type: 'text/csv', data: 'not,a,register\n1,2,3' }]));
        expect(res.status, `${r.path} ${filename}: ${res.text.slice(0, 200)}`).toBeLessThan(500);
      }
    }
    for (const p of ['/tmp/proof-evil.csv', '/tmp/proof-evil-abs.csv', path.resolve('proof-evil.csv'), path.join(dataDir, '..', 'proof-evil.csv')]) expect(fs.existsSync(p), p).toBe(false);
  });

  // File uploads (standards' certificates, datasheets, photos): type by magic bytes, size, traversal
  // and nothing left behind are proved in tests/integration/records-uploads.test.ts.
});

describe('security headers', () => {
  it('sends helmet headers on API answers, errors included: CSP with no external hosts, nosniff, frame-ancestors, no X-Powered-By', async () => {
    for (const p of ['/api/health', '/api/nothing-here', '/api/jobs']) {
      const r = await rawRequest(ctx.srv.url, { method: 'GET', path: p, headers: { cookie: ctx.clients.lead.cookie } });
      const h = r.headers;
      expect(h['x-content-type-options'], p).toBe('nosniff');
      expect(h['x-frame-options'], p).toBe('SAMEORIGIN');
      expect(h['x-powered-by'], p).toBeUndefined();
      expect(h['referrer-policy'], p).toBe('no-referrer');
      expect(h['cross-origin-opener-policy'], p).toBe('same-origin');
      const csp = String(h['content-security-policy']);
      const directives = Object.fromEntries(csp.split(';').map((d) => d.trim().split(/\s+/)).map(([k, ...v]) => [k, v]));
      expect(directives['default-src']).toEqual(["'self'"]);
      expect(directives['frame-ancestors']).toEqual(["'self'"]);
      expect(directives['object-src']).toEqual(["'none'"]);
      expect(directives['script-src']).toEqual(["'self'"]);
      // No host is named anywhere: only 'self', keywords and scheme sources (data:, blob:, ws:, wss:).
      for (const [d, sources] of Object.entries(directives)) {
        for (const s of sources as string[]) expect(s, `${d} ${s}`).toMatch(/^('[a-z-]+'|[a-z]+:)$/);
      }
    }
  });
});
