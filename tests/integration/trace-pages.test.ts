/**
 * The raw trace of a run goes out in keyset pages on (wall_ms, seq): this checks that the pages
 * join into exactly the rows, in order, that one query would give — ties in wall_ms across a page
 * boundary, JSON escaping, non-finite values, filters and `truncated`, plain and gzip-compressed — on PGlite and (under
 * `npm run test:postgres`) on a PostgreSQL server, and that the HTTP reply is the same document.
 */
import { gunzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sampleRepository } from '../../server/db/repositories/sample.repository';
import { signInAll } from '../helpers/proof-helpers';
import { startTestServer, type TestServer } from '../helpers/test-server';

const RUN = '33333333-3333-4333-8333-333333333333';
const N = 53;

interface Item {
  seq: number;
  device: string;
  wallMs: number;
  value: number | null;
  unit: string | null;
  raw: string;
  source: { kind: string; id: string };
  clientWallMs: number | null;
}

let srv: TestServer;
let expected: Item[];

beforeAll(async () => {
  srv = await startTestServer();
  await srv.database.exec(`INSERT INTO runs (id, job_id, kind, status, plan) SELECT '${RUN}', id, 'as-found', 'complete', '{"benchId":"bench-1","points":[]}'::jsonb FROM jobs LIMIT 1`);
  expected = [];
  const values: string[] = [];
  for (let i = 0; i < N; i++) {
    // Three samples share each wall-clock time, and seq runs against time within a tie, so the
    // order (wall_ms, seq) differs from insertion order and ties straddle page boundaries.
    const seq = 9_000_000 + (N - i);
    const wallMs = 1.7e12 + Math.floor(i / 3) * 100 + 0.25;
    const device = i % 2 ? 'current' : 'pressure';
    const value = i === 7 ? 'NaN' : i === 8 ? null : String(i / 3);
    const raw = i === 5 ? 'quote " back\\slash tab\t' : `DP +${i}`;
    const unit = i === 9 ? null : 'mA';
    // Every fifth line forwarded by a browser (the user's id, the sender's clock); the rest from the
    // bench's own port, some as stored before the source was kept (no source id: the bench's).
    const browser = i % 5 === 0;
    const source = browser ? { kind: 'browser', id: 'user-7' } : { kind: 'port', id: 'bench-t' };
    const clientWallMs = browser ? wallMs - 12.5 : null;
    const sourceSql = browser ? `'browser', 'user-7', ${clientWallMs}` : i % 5 === 1 ? `'port', NULL, NULL` : `'port', 'bench-t', NULL`;
    values.push(`(${seq}, 'bench-t', '${device}', '${RUN}', '${raw.replaceAll("'", "''")}', ${value === null ? 'NULL' : `'${value}'::float8`}, ${unit === null ? 'NULL' : `'${unit}'`}, ${wallMs}, ${i}, ${sourceSql})`);
    expected.push({ seq, device, wallMs, value: value === null || value === 'NaN' ? null : Number(value), unit, raw, source, clientWallMs });
  }
  await srv.database.exec(`INSERT INTO samples (seq, bench_id, device, run_id, raw, value, unit, wall_ms, mono_ms, source_kind, source_id, client_wall_ms) VALUES ${values.join(',')}`);
  expected.sort((a, b) => a.wallMs - b.wallMs || a.seq - b.seq);
}, 60_000);

afterAll(async () => {
  await srv?.close();
});

async function collect(gen: AsyncGenerator<Buffer>, gzip = false): Promise<{ doc: { items: Item[]; truncated: boolean }; pieces: number }> {
  const parts: Buffer[] = [];
  for await (const b of gen) parts.push(b);
  const body = Buffer.concat(parts);
  return { doc: JSON.parse((gzip ? gunzipSync(body) : body).toString('utf8')) as { items: Item[]; truncated: boolean }, pieces: parts.length };
}

describe('trace in keyset pages', () => {
  it('joins pages of any size into the whole trace, in (wall_ms, seq) order', async () => {
    const repo = sampleRepository(srv.database.db);
    for (const pageRows of [1, 2, 3, 7, 52, 53, 54, 10_000]) {
      const { doc, pieces } = await collect(repo.traceJson(RUN, { limit: 100_000 }, { pageRows }));
      expect(doc.truncated, `page ${pageRows}`).toBe(false);
      expect(doc.items, `page ${pageRows}`).toEqual(expected);
      // The opening, one piece a page, the closing.
      expect(pieces, `page ${pageRows}`).toBe(Math.ceil(N / pageRows) + 2);
      const zipped = await collect(repo.traceJson(RUN, { limit: 100_000 }, { pageRows, gzip: true }), true);
      expect(zipped.doc, `gzip, page ${pageRows}`).toEqual(doc);
    }
  });

  it('stops at the limit and says the trace was truncated; an exact fit is not truncated', async () => {
    const repo = sampleRepository(srv.database.db);
    for (const gzip of [false, true]) {
      const cut = await collect(repo.traceJson(RUN, { limit: 20 }, { pageRows: 7, gzip }), gzip);
      expect(cut.doc.truncated).toBe(true);
      expect(cut.doc.items).toEqual(expected.slice(0, 20));
      const exact = await collect(repo.traceJson(RUN, { limit: N }, { pageRows: 7, gzip }), gzip);
      expect(exact.doc.truncated).toBe(false);
      expect(exact.doc.items).toEqual(expected);
    }
  });

  it('applies the time and device filters across pages; an unknown run gives an empty trace', async () => {
    const repo = sampleRepository(srv.database.db);
    const from = expected[10]!.wallMs;
    const to = expected[40]!.wallMs;
    for (const gzip of [false, true]) {
      const { doc } = await collect(repo.traceJson(RUN, { from, to, device: 'current', limit: 1000 }, { pageRows: 4, gzip }), gzip);
      expect(doc.items).toEqual(expected.filter((s) => s.wallMs >= from && s.wallMs <= to && s.device === 'current'));
      const none = await collect(repo.traceJson('44444444-4444-4444-8444-444444444444', { limit: 10 }, { pageRows: 4, gzip }), gzip);
      expect(none.doc).toEqual({ items: [], truncated: false });
    }
  });

  it('a reader that stops half way frees its gzip stream, and the next trace is whole', async () => {
    const repo = sampleRepository(srv.database.db);
    const gen = repo.traceJson(RUN, { limit: 1000 }, { pageRows: 5, gzip: true });
    expect((await gen.next()).done).toBe(false);
    expect((await gen.next()).done).toBe(false);
    await gen.return(undefined);
    const again = await collect(repo.traceJson(RUN, { limit: 1000 }, { pageRows: 5, gzip: true }), true);
    expect(again.doc.items).toEqual(expected);
  });

  it('GET /api/runs/:id/trace sends the same document, and 404 for an unknown run', async () => {
    const { lead } = await signInAll(srv.url);
    // fetch asks for gzip and inflates; a client that asks for identity gets plain JSON.
    const r = await lead.get(`/api/runs/${RUN}/trace?limit=30`);
    expect(r.status).toBe(200);
    expect(r.headers.get('content-encoding')).toBe('gzip');
    expect(r.body).toEqual({ items: expected.slice(0, 30), truncated: true });
    const plain = await lead.req('GET', `/api/runs/${RUN}/trace?limit=30`, undefined, { 'accept-encoding': 'identity' });
    expect(plain.status).toBe(200);
    expect(plain.headers.get('content-encoding')).toBeNull();
    expect(plain.body).toEqual(r.body);
    const missing = await lead.get('/api/runs/44444444-4444-4444-8444-444444444444/trace');
    expect(missing.status).toBe(404);
  });
});
