/**
 * The PGlite worker thread: owns the embedded PostgreSQL and runs every statement off the main
 * thread, so a long query does not stall the live path (serial → hub → WebSocket). Started by
 * {@link startPgliteWorker}; speaks the messages in pglite-protocol.ts. Requests are handed to
 * PGlite in arrival order (PGlite serialises them itself; the main side serialises transactions).
 */
import fs from 'node:fs';
import os from 'node:os';
import { parentPort, workerData } from 'node:worker_threads';
import { PGlite, type Results } from '@electric-sql/pglite';
import { GzipPages } from './gzip-pages';
import { ERROR_FIELDS, type JsonArrayResult, type JsonArrayWrap, type JsonPageResult, type WireError, type WireResults, type WorkerHello, type WorkerInit, type WorkerReply, type WorkerRequest } from './pglite-protocol';

const port = parentPort;
if (!port) throw new Error('pglite-worker.ts runs as a worker thread only');
const init = workerData as WorkerInit;

const identity = (v: unknown) => v;
const parserCache = new Map<string, Record<number, (v: unknown) => unknown>>();

/** The same identity parsers drizzle asks for (they are functions, which cannot cross threads). */
function parsersFor(oids: number[]): Record<number, (v: unknown) => unknown> | undefined {
  if (!oids.length) return undefined;
  const key = oids.join(',');
  let p = parserCache.get(key);
  if (!p) {
    p = Object.fromEntries(oids.map((o) => [o, identity]));
    parserCache.set(key, p);
  }
  return p;
}

function toWireError(e: unknown): WireError {
  if (!(e instanceof Error)) return { message: String(e) };
  const out: WireError = { message: e.message, name: e.name, stack: e.stack };
  const rec = e as unknown as Record<string, unknown>;
  for (const f of ERROR_FIELDS) if (typeof rec[f] === 'string') out[f] = rec[f];
  return out;
}

async function toWire(r: Results<unknown>): Promise<{ result: WireResults; transfer: ArrayBuffer[] }> {
  const result: WireResults = { rows: r.rows, fields: r.fields, affectedRows: r.affectedRows, command: r.command, rowCount: r.rowCount };
  const transfer: ArrayBuffer[] = [];
  if (r.blob) {
    result.blob = await r.blob.arrayBuffer();
    transfer.push(result.blob);
  }
  return { result, transfer };
}

/**
 * `COPY (select) TO '/dev/blob'` in text format, one json value per line, turned into one JSON
 * array. COPY's text format escapes only backslash and control characters; json output has no raw
 * control characters, so undoing `\\` is the whole unescape.
 */
async function copyJsonArray(pg: PGlite, select: string, limit: number, wrap: JsonArrayWrap = { prefix: '', suffix: ['', ''] }): Promise<JsonArrayResult> {
  const r = await pg.query(`COPY (${select}) TO '/dev/blob'`);
  const src = r.blob ? new Uint8Array(await r.blob.arrayBuffer()) : new Uint8Array(0);
  const prefix = Buffer.from(wrap.prefix);
  const suffixes = wrap.suffix.map((x) => Buffer.from(x));
  const out = Buffer.allocUnsafe(prefix.length + src.length + 2 + Math.max(...suffixes.map((x) => x.length)));
  let w = prefix.copy(out, 0);
  out[w++] = 0x5b; // [
  let count = 0;
  let more = false;
  let i = 0;
  let backslash = src.indexOf(0x5c);
  while (i < src.length) {
    const nl = src.indexOf(0x0a, i);
    const end = nl === -1 ? src.length : nl;
    if (count === limit) {
      more = true;
      break;
    }
    if (count > 0) out[w++] = 0x2c; // ,
    if (backslash !== -1 && backslash < i) backslash = src.indexOf(0x5c, i);
    if (backslash === -1 || backslash >= end) {
      out.set(src.subarray(i, end), w);
      w += end - i;
    } else {
      for (let k = i; k < end; k++) {
        if (src[k] === 0x5c) k++; // `\\` → `\`
        out[w++] = src[k]!;
      }
    }
    count++;
    i = end + 1;
  }
  out[w++] = 0x5d; // ]
  w += suffixes[more ? 1 : 0]!.copy(out, w);
  const bytes = out.buffer.slice(out.byteOffset, out.byteOffset + w) as ArrayBuffer;
  return { bytes, count, more };
}

/**
 * Lowers this thread's priority to the nice value it was started with (`init.nice`, DB_THREAD_NICE),
 * if any. Linux applies setpriority(2) to a single thread when given its thread id; elsewhere this
 * is skipped. See DB_THREAD_NICE in server/env.ts for what it costs.
 */
function lowerOwnPriority(nice: number | undefined): void {
  if (!nice || nice <= 0) return;
  try {
    const tid = Number(fs.readlinkSync('/proc/thread-self').split('/').pop());
    if (Number.isInteger(tid) && tid > 0) os.setPriority(tid, Math.max(os.getPriority(tid), nice));
  } catch {
    // Not Linux, or not allowed: the thread keeps the process's priority.
  }
}

/**
 * `COPY (select) TO '/dev/blob'` of two columns, a key and a json value, into one page: each json
 * value preceded by a comma (`,v1,v2`) and the last key returned. Unescaping as in {@link copyJsonArray}; a key is
 * expected to hold no tab, newline or backslash (numbers, ids).
 */
async function copyJsonPage(pg: PGlite, select: string, limit: number): Promise<JsonPageResult> {
  const r = await pg.query(`COPY (${select}) TO '/dev/blob'`);
  const src = r.blob ? new Uint8Array(await r.blob.arrayBuffer()) : new Uint8Array(0);
  const out = Buffer.allocUnsafe(src.length + 1);
  let w = 0;
  let count = 0;
  let more = false;
  let keyAt = -1;
  let keyEnd = -1;
  let backslash = src.indexOf(0x5c);
  let i = 0;
  while (i < src.length) {
    const nl = src.indexOf(0x0a, i);
    const end = nl === -1 ? src.length : nl;
    if (count === limit) {
      more = true;
      break;
    }
    const tab = src.indexOf(0x09, i);
    if (tab === -1 || tab > end) throw new Error('copyJsonPage: a row without its key column');
    keyAt = i;
    keyEnd = tab;
    out[w++] = 0x2c; // , before every value: the caller drops the first one where it must
    if (backslash !== -1 && backslash <= tab) backslash = src.indexOf(0x5c, tab + 1);
    if (backslash === -1 || backslash >= end) {
      out.set(src.subarray(tab + 1, end), w);
      w += end - tab - 1;
    } else {
      for (let k = tab + 1; k < end; k++) {
        if (src[k] === 0x5c) k++; // `\\` → `\`
        out[w++] = src[k]!;
      }
    }
    count++;
    i = end + 1;
  }
  const bytes = out.buffer.slice(out.byteOffset, out.byteOffset + w) as ArrayBuffer;
  const lastKey = keyAt === -1 ? undefined : Buffer.from(src.buffer, src.byteOffset + keyAt, keyEnd - keyAt).toString('utf8');
  return { bytes, count, more, ...(lastKey !== undefined ? { lastKey } : {}) };
}

/**
 * Open gzip streams of documents being sent in pages (a long trace), by stream id. Compressing
 * here keeps the bulk of a trace off the main thread: only about a tenth of the bytes cross over.
 */
const gzips = new Map<number, GzipPages>();

const toArrayBuffer = (b: Buffer) => b.buffer.slice(b.byteOffset, b.byteOffset + b.length) as ArrayBuffer;

async function gzipEnd(stream: number, tail: string | undefined): Promise<ArrayBuffer> {
  const g = gzips.get(stream);
  gzips.delete(stream);
  if (!g) return new ArrayBuffer(0);
  if (tail === undefined) {
    g.destroy();
    return new ArrayBuffer(0);
  }
  return toArrayBuffer(await g.end(Buffer.from(tail)));
}

async function main(): Promise<void> {
  lowerOwnPriority(init.nice);
  let pg: PGlite;
  try {
    pg = init.dataDir ? new PGlite(init.dataDir) : new PGlite(init.loadDataDir ? { loadDataDir: new Blob([init.loadDataDir]) } : {});
    await pg.waitReady;
  } catch (e) {
    port!.postMessage({ ready: false, error: toWireError(e) } satisfies WorkerHello);
    return;
  }
  port!.postMessage({ ready: true } satisfies WorkerHello);

  const handle = async (m: WorkerRequest): Promise<void> => {
    try {
      let reply: WorkerReply;
      const transfer: ArrayBuffer[] = [];
      switch (m.op) {
        case 'query': {
          const r = await pg.query(m.sql, m.params, {
            rowMode: m.rowMode,
            parsers: parsersFor(m.rawTypes),
            ...(m.blob ? { blob: new Blob([m.blob]) } : {}),
          });
          const w = await toWire(r);
          transfer.push(...w.transfer);
          reply = { id: m.id, ok: true, result: w.result };
          break;
        }
        case 'exec': {
          const rs = await pg.exec(m.sql);
          const results: WireResults[] = [];
          for (const r of rs) {
            const w = await toWire(r);
            transfer.push(...w.transfer);
            results.push(w.result);
          }
          reply = { id: m.id, ok: true, result: results };
          break;
        }
        case 'copyJsonArray': {
          const r = await copyJsonArray(pg, m.select, m.limit, m.wrap);
          transfer.push(r.bytes);
          reply = { id: m.id, ok: true, result: r };
          break;
        }
        case 'copyJsonPage': {
          const r = await copyJsonPage(pg, m.select, m.limit);
          if (m.gzip) {
            const page = new Uint8Array(r.bytes, m.gzip.dropComma && r.count > 0 ? 1 : 0);
            let g = gzips.get(m.gzip.stream);
            if (!g) gzips.set(m.gzip.stream, (g = new GzipPages()));
            r.bytes = toArrayBuffer(await g.push([Buffer.from(m.gzip.before ?? ''), page]));
          }
          transfer.push(r.bytes);
          reply = { id: m.id, ok: true, result: r };
          break;
        }
        case 'gzipEnd': {
          const bytes = await gzipEnd(m.stream, m.tail);
          transfer.push(bytes);
          reply = { id: m.id, ok: true, result: { bytes, count: 0, more: false } };
          break;
        }
        case 'dump': {
          const bytes = await (await pg.dumpDataDir('none')).arrayBuffer();
          transfer.push(bytes);
          reply = { id: m.id, ok: true, result: bytes };
          break;
        }
        case 'close': {
          if (!pg.closed) {
            // PGlite on Node writes pages lazily: checkpoint so the files on disk are whole.
            await pg.query('CHECKPOINT');
            await pg.close();
          }
          reply = { id: m.id, ok: true, result: null };
          break;
        }
      }
      port!.postMessage(reply, transfer);
    } catch (e) {
      port!.postMessage({ id: m.id, ok: false, error: toWireError(e) } satisfies WorkerReply);
    }
  };
  port!.on('message', (m: WorkerRequest) => void handle(m));
}

void main();
