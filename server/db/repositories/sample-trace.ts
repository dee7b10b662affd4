/**
 * A run's raw trace as JSON pages, read in keyset pages on (wall_ms, seq): built by PostgreSQL and
 * compressed in the PGlite worker, or serialised here on a PostgreSQL server.
 */
import { and, asc, eq, gte, lte, sql, type SQL } from 'drizzle-orm';
import { pgliteWorkerOf, type Db } from '../client';
import { GzipPages } from '../gzip-pages';
import type { PgliteWorkerClient } from '../pglite-worker-client';
import { samples } from '../schema';

/** A string literal for SQL that cannot take bind parameters (COPY); standard_conforming_strings is on. */
const literal = (s: string) => `'${s.replaceAll("'", "''")}'`;
function finite(n: number): string {
  if (!Number.isFinite(n)) throw new Error(`not a finite number: ${n}`);
  return String(n);
}

/** Trace query of {@link SampleRepository.traceJson}. */
export interface TraceQuery {
  /** Wall-clock ms since epoch, inclusive. */
  from?: number;
  to?: number;
  device?: string;
  /** Most samples returned. */
  limit: number;
}

/** Samples per piece of a trace reply (about 120 B each as JSON). */
export const TRACE_PAGE_ROWS = 10_000;
const OPEN = Buffer.from('{"items":[');

interface TracePage {
  /** JSON items, each after a comma (`,v1,v2`), no brackets. */
  bytes: Buffer;
  count: number;
  /** More rows match after this page (whether or not the caller wants them). */
  more: boolean;
  last?: { wallMs: number; seq: number };
}

/** Compresses a document given in pieces, a gzip member flushed after each piece. */
async function* gzipHere(pieces: AsyncGenerator<Buffer>): AsyncGenerator<Buffer> {
  const gz = new GzipPages();
  let ended = false;
  try {
    for await (const p of pieces) {
      const out = await gz.push([p]);
      if (out.length) yield out;
    }
    ended = true;
    yield await gz.end(new Uint8Array(0));
  } finally {
    if (!ended) gz.destroy();
  }
}

/**
 * Walks a trace's keyset pages on (wall_ms, seq) up to `limit` rows: asks `page` for the next one
 * after the last row so far (`first` until a page has brought a row), yields each, and returns
 * whether rows were left out (the limit reached with more to come).
 */
async function* keysetPages(
  limit: number,
  pageRows: number,
  page: (after: TracePage['last'], want: number, first: boolean) => Promise<TracePage>,
): AsyncGenerator<TracePage, boolean> {
  const most = Math.max(0, Math.floor(limit));
  let sent = 0;
  let after: TracePage['last'];
  for (;;) {
    const p = await page(after, Math.min(pageRows, most - sent), sent === 0);
    yield p;
    if (p.count > 0) {
      sent += p.count;
      after = p.last;
    }
    if (!p.more) return false;
    if (sent >= most) return true;
  }
}

/**
 * Samples of a run between two wall-clock times, in time order, as the UTF-8 JSON
 * `{ "items": TraceSample[], "truncated": boolean }` (at most `limit` items; `truncated` when
 * there are more), yielded in pieces of at most `pageRows` samples; with `gzip`, the pieces
 * are one gzip stream of that document. Each piece is one keyset page on (wall_ms, seq), so a
 * long run's trace never holds the database for longer than a page (the sample writer goes in
 * between) and never puts tens of MB on this thread at once. On PGlite the rows are turned
 * into JSON by PostgreSQL under COPY, and compressed, in the worker: this thread neither
 * parses nor serialises them, and with gzip sees about a tenth of the bytes.
 */
export function createSampleTrace(db: Db) {
  const pglite = pgliteWorkerOf(db);

  /**
   * The trace document in pieces: the opening once the first page is in hand (so a failing first
   * query fails before any byte is sent), one piece a page (`,v1,v2…`, the first page without its
   * comma: a view, no copy), then the closing.
   */
  async function* trace(runId: string, q: TraceQuery, pageRows: number): AsyncGenerator<Buffer> {
    const pages = keysetPages(q.limit, pageRows, (after, want) => (pglite ? pglitePage(runId, q, after, want) : pgPage(runId, q, after, want)));
    let first = true;
    let step = await pages.next();
    yield OPEN;
    for (; !step.done; step = await pages.next()) {
      const page = step.value;
      if (page.count === 0) continue;
      yield first ? page.bytes.subarray(1) : page.bytes;
      first = false;
    }
    yield Buffer.from(`],"truncated":${step.value}}`);
  }

  /** The same document gzip-compressed in the PGlite worker, page by page, so only compressed bytes reach this thread. */
  async function* gzipTraceInWorker(w: PgliteWorkerClient, runId: string, q: TraceQuery, pageRows: number): AsyncGenerator<Buffer> {
    const stream = w.newGzipStream();
    let ended = false;
    try {
      const pages = keysetPages(q.limit, pageRows, (after, want, first) => pglitePage(runId, q, after, want, { stream, ...(first ? { before: OPEN.toString(), dropComma: true } : {}) }));
      let step = await pages.next();
      for (; !step.done; step = await pages.next()) if (step.value.bytes.length) yield step.value.bytes;
      ended = true;
      yield await w.gzipEnd(stream, `],"truncated":${step.value}}`);
    } finally {
      if (!ended) await w.gzipEnd(stream).catch(() => undefined);
    }
  }

  /** One keyset page on PGlite: JSON built by PostgreSQL, framed in the worker. */
  async function pglitePage(
    runId: string,
    q: TraceQuery,
    after: TracePage['last'],
    want: number,
    gzip?: { stream: number; before?: string; dropComma?: boolean },
  ): Promise<TracePage> {
    const where = [`run_id = ${literal(runId)}`];
    if (q.from !== undefined) where.push(`wall_ms >= ${finite(q.from)}`);
    if (q.to !== undefined) where.push(`wall_ms <= ${finite(q.to)}`);
    if (q.device) where.push(`device = ${literal(q.device)}`);
    if (after) where.push(`(wall_ms, seq) > (${finite(after.wallMs)}, ${finite(after.seq)})`);
    // Hand-built JSON (float8 text is JSON's number syntax and round-trips exactly; a non-finite
    // value becomes null, as in JSON.stringify). The key column is "wall_ms seq".
    const select =
      `SELECT wall_ms::text || ' ' || seq, '{"seq":' || seq || ',"device":' || to_json(device) || ',"wallMs":' || wall_ms ` +
      `|| ',"value":' || CASE WHEN value IS NULL OR value IN ('NaN', 'Infinity', '-Infinity') THEN 'null' ELSE value::text END ` +
      `|| ',"unit":' || coalesce(to_json(unit)::text, 'null') || ',"raw":' || to_json(raw) ` +
      `|| ',"source":{"kind":' || to_json(source_kind) || ',"id":' || to_json(coalesce(source_id, bench_id)) || '}' ` +
      `|| ',"clientWallMs":' || CASE WHEN client_wall_ms IS NULL OR client_wall_ms IN ('NaN', 'Infinity', '-Infinity') THEN 'null' ELSE client_wall_ms::text END || '}' ` +
      `FROM samples WHERE ${where.join(' AND ')} ORDER BY wall_ms, seq LIMIT ${want + 1}`;
    const r = await pglite!.copyJsonPage(select, want, gzip);
    const [w, s] = (r.lastKey ?? '').split(' ');
    return { bytes: r.bytes, count: r.count, more: r.more, ...(r.lastKey ? { last: { wallMs: Number(w), seq: Number(s) } } : {}) };
  }

  /** One keyset page on a PostgreSQL server, serialised here. */
  async function pgPage(runId: string, q: TraceQuery, after: TracePage['last'], want: number): Promise<TracePage> {
    const where: SQL[] = [eq(samples.runId, runId)];
    if (q.from !== undefined) where.push(gte(samples.wallMs, q.from));
    if (q.to !== undefined) where.push(lte(samples.wallMs, q.to));
    if (q.device) where.push(eq(samples.device, q.device));
    if (after) where.push(sql`(${samples.wallMs}, ${samples.seq}) > (${after.wallMs}, ${after.seq})`);
    const rows = await db
      .select({
        seq: samples.seq,
        device: samples.device,
        wallMs: samples.wallMs,
        value: samples.value,
        unit: samples.unit,
        raw: samples.raw,
        sourceKind: samples.sourceKind,
        sourceId: samples.sourceId,
        benchId: samples.benchId,
        clientWallMs: samples.clientWallMs,
      })
      .from(samples)
      .where(and(...where))
      .orderBy(asc(samples.wallMs), asc(samples.seq))
      .limit(want + 1);
    const more = rows.length > want;
    if (more) rows.length = want;
    const items = rows.map((r) => ({
      seq: Number(r.seq),
      device: r.device,
      wallMs: r.wallMs,
      value: r.value,
      unit: r.unit,
      raw: r.raw,
      source: { kind: r.sourceKind, id: r.sourceId ?? r.benchId },
      clientWallMs: r.clientWallMs,
    }));
    const lastRow = items.at(-1);
    return {
      bytes: Buffer.from(items.length ? `,${JSON.stringify(items).slice(1, -1)}` : ''),
      count: items.length,
      more,
      ...(lastRow ? { last: { wallMs: lastRow.wallMs, seq: lastRow.seq } } : {}),
    };
  }

  return function traceJson(runId: string, q: TraceQuery, opts: { pageRows?: number; gzip?: boolean } = {}): AsyncGenerator<Buffer> {
    const pageRows = opts.pageRows ?? TRACE_PAGE_ROWS;
    if (!opts.gzip) return trace(runId, q, pageRows);
    return pglite ? gzipTraceInWorker(pglite, runId, q, pageRows) : gzipHere(trace(runId, q, pageRows));
  };
}
