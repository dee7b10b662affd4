/**
 * Input hardening (issue 14, findings 1, 5–7, 9–11): foreign Host headers refused (DNS
 * rebinding); dates that exist, within bounds, on every date field and in the CSV import (dry run
 * and confirm agree); lone surrogates a 400 field error; ranges of sane magnitude; indices in
 * decimal digits; no source maps served; UTF-8 upload names kept, each upload with its own name;
 * CSV formula cells after a separator neutralised, invalid UTF-8 refused on every path, an
 * unterminated quote a row error.
 */
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { createLogger } from '../../server/logger';
import { tinyPng } from '../fixtures/test-files';
import { rawRequest } from '../helpers/proof-helpers';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

const PLANT_ORIGIN = 'http://calibration.plant.example:8080';
/**
 * Sends `total` bytes (beginning with `head`) in 64 KiB writes 2 ms apart on one keep-alive
 * connection, then a small request on the same connection; resolves with both answers, or with
 * the socket error where one came instead.
 */
async function slowUploadThenAnother(path: string, headers: Record<string, string>, head: Buffer, total: number): Promise<{ first: string; then: string }> {
  const u = new URL(srv.url);
  const agent = new http.Agent({ keepAlive: true, maxSockets: 1 });
  const send = (hdrs: Record<string, string>, body: Buffer) =>
    new Promise<string>((resolve) => {
      const req = http.request({ host: u.hostname, port: u.port, method: 'POST', path, agent, headers: { 'content-length': String(body.length), ...hdrs } }, (res) => {
        const parts: Buffer[] = [];
        res.on('data', (c: Buffer) => parts.push(c));
        res.on('end', () => resolve(`${res.statusCode} ${(JSON.parse(Buffer.concat(parts).toString() || '{}') as { error?: { code?: string } }).error?.code ?? ''}`));
        res.on('error', (e: NodeJS.ErrnoException) => resolve(`error ${e.code}`));
      });
      req.on('error', (e: NodeJS.ErrnoException) => resolve(`error ${e.code}`));
      let sent = 0;
      const tick = () => {
        if (req.destroyed) return;
        const n = Math.min(64 * 1024, body.length - sent);
        req.write(body.subarray(sent, sent + n));
        sent += n;
        if (sent < body.length) setTimeout(tick, 2);
        else req.end();
      };
      tick();
    });
  try {
    const body = Buffer.alloc(total, 0x41);
    head.copy(body);
    const first = await send(headers, body);
    const then = await send({ 'content-type': 'text/csv', origin: srv.url, cookie: lead.cookie }, head);
    return { first, then };
  } finally {
    agent.destroy();
  }
}


let srv: TestServer;
let lead: ApiClient;
let tech: ApiClient;
let port: string;

beforeAll(async () => {
  srv = await startTestServer({ env: { ALLOWED_ORIGINS: PLANT_ORIGIN } });
  port = new URL(srv.url).port;
  lead = new ApiClient(srv.url);
  await lead.login(demoEmail('lead'));
  tech = new ApiClient(srv.url);
  await tech.login(demoEmail('tech'));
}, 240_000);
afterAll(async () => {
  await srv?.close();
});

describe('Host header (DNS rebinding)', () => {
  it('refuses a foreign Host with 421 in the error shape, even with a matching Origin: no cookie is issued', async () => {
    const r = await rawRequest(srv.url, {
      method: 'POST',
      path: '/api/auth/login',
      headers: { host: 'evil.example', origin: 'http://evil.example', 'content-type': 'application/json' },
      body: JSON.stringify({ email: demoEmail('admin'), password: 'stillpoint-demo' }),
    });
    expect(r.status).toBe(421);
    expect((r.json as { error: { code: string } }).error.code).toBe('wrong_host');
    expect(r.headers['set-cookie']).toBeUndefined();
    for (const host of [`evil.example:${port}`, `calibration.plant.example`, `127.0.0.1.evil.example:${port}`]) {
      const g = await rawRequest(srv.url, { method: 'GET', path: '/api/health', headers: { host } });
      expect(g.status, host).toBe(421);
    }
  });

  it('accepts localhost forms, the loopback addresses with the port, and the configured origins', async () => {
    for (const host of [`localhost:${port}`, 'localhost', `127.0.0.1:${port}`, `[::1]:${port}`, 'calibration.plant.example:8080']) {
      const g = await rawRequest(srv.url, { method: 'GET', path: '/api/health', headers: { host } });
      expect(g.status, host).toBe(200);
    }
  });
});

describe('dates that exist', () => {
  const standard = {
    kind: 'pressure',
    description: 'Test module',
    serial: 'DATE-TEST-1',
    rangeMin: 0,
    rangeMax: 100,
    unit: 'kPa',
    accuracy: { pctReading: 0.02 },
    resolution: 0.001,
    certificateNo: 'C-1',
    calibratedOn: '2026-01-10',
    dueOn: '2027-01-10',
  };

  it.each([
    ['calibratedOn', '2026-02-31', 'No such date'],
    ['calibratedOn', '0000-01-01', 'No such date'],
    ['calibratedOn', '2023-02-29', 'No such date'],
    ['calibratedOn', '2999-01-01', ''],
    ['dueOn', '2026-02-31', 'No such date'],
    ['dueOn', '9999-12-31', 'years ahead'],
    ['dueOn', '2026-13-01', 'No such date'],
  ])('refuses a standard with %s = %s as a 400 field error (create and update)', async (field, value, message) => {
    const r = await lead.post('/api/standards', { ...standard, [field]: value });
    expect(r.status, JSON.stringify(r.body)).toBe(400);
    expect(r.body.error.fields[field]?.join(' ')).toContain(message);
    const id = ((await lead.get('/api/standards')).body.items as { id: string }[])[0]!.id;
    const u = await lead.req('PUT', `/api/standards/${id}`, { ...standard, [field]: value });
    expect(u.status).toBe(400);
    expect(u.body.error.fields[field]).toBeDefined();
  });

  it('accepts 29 February of a leap year', async () => {
    const r = await lead.post('/api/standards', { ...standard, calibratedOn: '2024-02-29', dueOn: '2025-02-28' });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
  });

  it('refuses a job due on a day that does not exist or beyond the maximum ahead', async () => {
    const instrumentId = ((await lead.get('/api/instruments')).body.items as { id: string }[])[0]!.id;
    for (const dueOn of ['2026-02-31', '9999-12-31', '0000-01-01']) {
      const r = await lead.post('/api/jobs', { instrumentId, dueOn });
      expect(r.status, dueOn).toBe(400);
      expect(r.body.error.fields.dueOn, dueOn).toBeDefined();
    }
  });

  it('finds the same bad dates in the CSV dry run as the confirm does (no 500)', async () => {
    const inst = 'tag,kind,lrv,urv,unit,outputMode,tolerancePct,intervalDays,lastCalibratedOn\nFT-951,dp-flow,0,100,kPa,linear,0.5,365,2026-02-31\nFT-952,dp-flow,0,100,kPa,linear,0.5,365,2999-06-01\n';
    const dry = await lead.post('/api/instruments/import', { csv: inst });
    expect(dry.status).toBe(200);
    expect(dry.body.rows.map((r: { ok: boolean }) => r.ok)).toEqual([false, false]);
    expect(dry.body.rows[0].errors.lastCalibratedOn).toEqual(['No such date']);
    expect(dry.body.rows[1].errors.lastCalibratedOn).toEqual(['This date is in the future']);
    const confirm = await lead.post('/api/instruments/import', { csv: inst, confirm: true });
    expect(confirm.status).toBe(400);
    expect(confirm.body.error.fields['row 1.lastCalibratedOn']).toEqual(['No such date']);

    const std = 'kind,description,serial,rangeMin,rangeMax,unit,resolution,certificateNo,calibratedOn,dueOn\npressure,Module,CSV-D-1,0,100,kPa,0.01,C-9,2026-01-05,2026-02-31\n';
    const sdry = await lead.post('/api/standards/import', { csv: std });
    expect(sdry.body.rows[0].errors.dueOn).toEqual(['No such date']);
    const sconfirm = await lead.post('/api/standards/import', { csv: std, confirm: true });
    expect(sconfirm.status).toBe(400);
  });
});

describe('text the database can hold', () => {
  it('refuses a lone surrogate in JSON text with a 400 naming the field (it answered 500 in the jsonb column)', async () => {
    const jobId = ((await tech.get('/api/jobs')).body.items as { id: string; tag: string }[]).find((j) => j.tag === 'FT-101')!.id;
    // The JSON escape \ud800 without its low half: a lone surrogate.
    const r = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, '{"permitNo":"\\ud800abc"}');
    expect(r.status).toBe(400);
    expect(r.body.error.fields.permitNo).toEqual(['Text may not contain a lone UTF-16 surrogate (U+D800–U+DFFF unpaired)']);
    const low = await lead.req('GET', '/api/audit?entityId=%ED%B0%80x'); // UTF-8 bytes of a low surrogate decode to U+FFFD: harmless
    expect(low.status).toBeLessThan(500);
    // A proper pair (an emoji) is fine.
    const ok = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, '{"permitNo":"PTW-\\ud83d\\ude00"}');
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
  });
});

describe('numbers that make sense', () => {
  const instrument = { tag: 'FT-960', kind: 'dp-flow', lrv: 0, urv: 100, unit: 'kPa', outputMode: 'linear', tolerancePct: 0.5, intervalDays: 365 };
  it.each([
    ['a span of 1e308', { urv: 1e308 }, 'urv'],
    ['±1.7e308', { lrv: -1.7e308, urv: 1.7e308 }, 'lrv'],
    ['a span of 5e-324', { urv: 5e-324 }, 'urv'],
  ])('refuses an instrument range with %s as a 400 field error', async (_what, range, field) => {
    const r = await lead.post('/api/instruments', { ...instrument, ...range });
    expect(r.status).toBe(400);
    expect(r.body.error.fields[field]).toBeDefined();
  });

  it('refuses a standard range beyond a sane magnitude for its unit', async () => {
    const r = await lead.post('/api/standards', {
      kind: 'current', description: 'Meter', serial: 'NUM-1', rangeMin: 0, rangeMax: 1e300, unit: 'mA', accuracy: {}, resolution: 0.001, certificateNo: 'C', calibratedOn: '2026-01-01', dueOn: '2027-01-01',
    });
    expect(r.status).toBe(400);
    expect(r.body.error.fields.rangeMax).toBeDefined();
  });

  it('takes point indices and revisions in decimal digits only (0x1 is refused, not read as 1)', async () => {
    const id = '00000000-0000-4000-8000-000000000000';
    for (const index of ['0x1', '1e0', '+1', '1.0', '01']) {
      const r = await tech.post(`/api/runs/${id}/points/${index}/capture`, { reason: 'a manual capture' });
      expect(r.status, index).toBe(400);
      expect(r.body.error.fields['params.index'], index).toBeDefined();
    }
    expect((await tech.post(`/api/runs/${id}/points/1/capture`, { reason: 'a manual capture' })).status).toBe(404);
    expect((await lead.get(`/api/jobs/${id}/revisions/0x2`)).status).toBe(400);
  });
});

describe('CSV', () => {
  it('quotes and neutralises a cell holding a separator followed by a formula character, and the import restores it', async () => {
    const created = await lead.post('/api/instruments', { tag: 'FT-970', kind: 'dp-flow', lrv: 0, urv: 100, unit: 'kPa', outputMode: 'linear', tolerancePct: 0.5, intervalDays: 365, notes: 'a;=1+1;b' });
    expect(created.status).toBe(201);
    const csv = (await lead.get('/api/instruments/export.csv')).body as string;
    const line = csv.split('\r\n').find((l) => l.startsWith('FT-970,'))!;
    expect(line).toContain(`"a;'=1+1;b"`);
    // Split the way a semicolon-locale spreadsheet would: no cell may begin with a formula character.
    for (const cell of line.split(';')) expect(cell.trimStart(), cell).not.toMatch(/^[=+@]/);
    const back = await lead.post('/api/instruments/import', { csv: `tag,kind,lrv,urv,unit,outputMode,tolerancePct,intervalDays,notes\nFT-971,dp-flow,0,100,kPa,linear,0.5,365,"a;'=1+1;b"\n` });
    expect(back.body.rows[0].value.notes).toBe('a;=1+1;b');
  });

  it('refuses invalid UTF-8 on the text/csv body path as on the multipart path (415)', async () => {
    const bytes = Buffer.concat([Buffer.from('tag,kind,lrv,urv,unit,outputMode,tolerancePct,intervalDays\nFT-9'), Buffer.from([0xff, 0xfe, 0xc3, 0x28]), Buffer.from(',dp-flow,0,100,kPa,linear,0.5,365\n')]);
    const text = await rawRequest(srv.url, { method: 'POST', path: '/api/instruments/import', headers: { 'content-type': 'text/csv', origin: srv.url, cookie: lead.cookie }, body: bytes });
    expect(text.status).toBe(415);
    expect((text.json as { error: { code: string } }).error.code).toBe('unsupported_media');
    const form = new FormData();
    form.append('file', new Blob([new Uint8Array(bytes)], { type: 'text/csv' }), 'x.csv');
    const multi = await fetch(`${srv.url}/api/instruments/import`, { method: 'POST', body: form, headers: { origin: srv.url, cookie: lead.cookie } });
    expect(multi.status).toBe(415);
    const json = await rawRequest(srv.url, {
      method: 'POST',
      path: '/api/instruments/import',
      headers: { 'content-type': 'application/json', origin: srv.url, cookie: lead.cookie },
      body: Buffer.concat([Buffer.from('{"csv":"'), Buffer.from([0xff, 0xfe]), Buffer.from('"}')]),
    });
    expect(json.status).toBe(415);
    const good = await rawRequest(srv.url, { method: 'POST', path: '/api/instruments/import', headers: { 'content-type': 'text/csv; charset=utf-8', origin: srv.url, cookie: lead.cookie }, body: 'tag,kind,lrv,urv,unit,outputMode,tolerancePct,intervalDays\nFT-981,dp-flow,0,100,kPa,linear,0.5,365\n' });
    expect(good.status, good.text).toBe(200);
  });

  it('answers a large upload it refuses with its status, read to the end, never a reset; the connection stays usable', async () => {
    // 1.5 MB (under the 2 MiB CSV limit) sent in 64 KiB writes: refused after reading (415), past
    // the limit (413), before reading by the route (400: no parser for the type), or before the route
    // (401: not signed in; 403: another site). Each answer arrives whole, and the same keep-alive
    // connection then carries the next request.
    const bad = Buffer.concat([Buffer.from('tag,kind\nFT-9'), Buffer.from([0xff, 0xfe])]);
    const own = { origin: srv.url, cookie: lead.cookie };
    const cases: [Record<string, string>, number, string][] = [
      [{ ...own, 'content-type': 'text/csv' }, 1_500_000, '415 unsupported_media'],
      [{ ...own, 'content-type': 'text/csv' }, 3_000_000, '413 payload_too_large'],
      [{ ...own, 'content-type': 'application/octet-stream' }, 1_500_000, '400 validation_failed'],
      [{ origin: srv.url, 'content-type': 'text/csv' }, 1_500_000, '401 unauthenticated'],
      [{ origin: 'http://evil.example', cookie: lead.cookie, 'content-type': 'text/csv' }, 1_500_000, '403 cross_site'],
    ];
    for (const [headers, total, expected] of cases) {
      const r = await slowUploadThenAnother('/api/instruments/import', headers, bad, total);
      expect(r, JSON.stringify(headers)).toEqual({ first: expected, then: '415 unsupported_media' });
    }
  });

  it('makes an unterminated quote a row error (dry run) and a 400 (confirm)', async () => {
    const csv = 'tag,kind,lrv,urv,unit,outputMode,tolerancePct,intervalDays,notes\nFT-982,dp-flow,0,100,kPa,linear,0.5,365,fine\nFT-983,dp-flow,0,100,kPa,linear,0.5,365,"never closed\n';
    const dry = await lead.post('/api/instruments/import', { csv });
    expect(dry.status).toBe(200);
    expect(dry.body.rows[0].ok).toBe(true);
    expect(dry.body.rows[1].ok).toBe(false);
    expect(dry.body.rows[1].errors._row[0]).toMatch(/no closing quote/);
    expect((await lead.post('/api/instruments/import', { csv, confirm: true })).status).toBe(400);
  });
});

describe('upload names', () => {
  async function photo(name: string) {
    const jobId = ((await tech.get('/api/jobs')).body.items as { id: string; tag: string; assigneeId: string | null }[]).find((j) => j.tag === 'FT-101')!.id;
    const form = new FormData();
    form.append('file', new Blob([new Uint8Array(tinyPng())], { type: 'image/png' }), name);
    const res = await fetch(`${srv.url}/api/jobs/${jobId}/photos`, { method: 'POST', body: form, headers: { origin: srv.url, cookie: tech.cookie } });
    return { jobId, status: res.status, body: (await res.json()) as { originalName: string } };
  }

  it('keeps a UTF-8 name as given, and each upload of the same content keeps its own name', async () => {
    const first = await photo('Manometer-Prüfung-µbar-夜.png');
    expect(first.status, JSON.stringify(first.body)).toBe(201);
    expect(first.body.originalName).toBe('Manometer-Prüfung-µbar-夜.png');
    const second = await photo('zweites Foto — ÅÄÖ.png');
    expect(second.status).toBe(201);
    expect(second.body.originalName).toBe('zweites Foto — ÅÄÖ.png');
    const names = ((await tech.get(`/api/jobs/${first.jobId}/photos`)).body.items as { originalName: string }[]).map((a) => a.originalName);
    expect(names).toEqual(expect.arrayContaining(['Manometer-Prüfung-µbar-夜.png', 'zweites Foto — ÅÄÖ.png']));
  });
});

describe('source maps', () => {
  it('are never served from the client directory, even when a stale one is there', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-client-'));
    fs.mkdirSync(path.join(dir, 'assets'));
    fs.writeFileSync(path.join(dir, 'index.html'), '<!doctype html><title>x</title>');
    fs.writeFileSync(path.join(dir, 'assets', 'index-abc.js'), 'console.log(1)');
    fs.writeFileSync(path.join(dir, 'assets', 'index-abc.js.map'), '{"version":3,"sources":["secret.ts"]}');
    const app = createApp({ services: srv.services, logger: createLogger('silent'), health: () => ({ ok: true, db: 'pglite', bench: 'sim' }), allowedOrigins: [], clientDir: dir });
    const server = http.createServer(app);
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    try {
      expect((await fetch(`${base}/assets/index-abc.js`)).status).toBe(200);
      const map = await fetch(`${base}/assets/index-abc.js.map`);
      expect(map.status).toBe(404);
      expect(await map.text()).not.toContain('secret.ts');
    } finally {
      await new Promise<void>((r) => server.close(() => r()));
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
