/**
 * Main-thread side of the PGlite worker: a stand-in for a `PGlite` instance with what
 * drizzle-orm/pglite calls on it (`query(sql, params, { rowMode, parsers })` and
 * `transaction(fn)`), plus `exec`, `copyJsonArray` and `close`. Statements run in a worker
 * thread (pglite-worker.ts), so the event loop here keeps serving the live path meanwhile.
 *
 * PGlite is one session: a FIFO lock on this side gives a transaction the session from BEGIN to
 * COMMIT or ROLLBACK, exactly as PGlite's own transaction mutex does in-process.
 */
import { createRequire } from 'node:module';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { ERROR_FIELDS, type JsonArrayResult, type JsonArrayWrap, type JsonPageResult, type WireError, type WireResults, type WorkerHello, type WorkerInit, type WorkerReply, type WorkerRequest } from './pglite-protocol';

/** An error raised in the worker, with the PostgreSQL fields PGlite gave it (`code`, `detail`, …). */
export class PgliteWorkerError extends Error {
  declare code?: string;
  declare severity?: string;
  declare detail?: string;
  declare hint?: string;
  declare position?: string;
  declare where?: string;
  declare schema?: string;
  declare table?: string;
  declare column?: string;
  declare dataType?: string;
  declare constraint?: string;
  declare routine?: string;

  constructor(wire: WireError) {
    super(wire.message);
    this.name = wire.name && wire.name !== 'Error' ? wire.name : 'PgliteWorkerError';
    for (const f of ERROR_FIELDS) if (wire[f] !== undefined) this[f] = wire[f];
    if (wire.stack) this.stack = `${this.name}: ${this.message}\n    at <pglite worker>\n${(this.stack ?? '').split('\n').slice(1).join('\n')}`;
  }
}

/** Query options accepted from drizzle (and tests); parser functions must be identities. */
export interface ProxyQueryOptions {
  rowMode?: 'object' | 'array';
  parsers?: Record<number, (value: unknown, typeId?: number) => unknown>;
  blob?: Blob;
}

export interface ProxyResults<T = Record<string, unknown>> {
  rows: T[];
  fields: { name: string; dataTypeID: number }[];
  affectedRows?: number;
  command?: string;
  rowCount?: number;
  blob?: Blob;
}

type Pending = { resolve: (v: unknown) => void; reject: (e: Error) => void };

/** The part of the client a transaction callback gets. */
export interface ProxyTransaction {
  query<T = Record<string, unknown>>(sql: string, params?: unknown[], options?: ProxyQueryOptions): Promise<ProxyResults<T>>;
  exec(sql: string): Promise<ProxyResults[]>;
  transaction<T>(fn: (tx: ProxyTransaction) => Promise<T>): Promise<T>;
  rollback(): Promise<void>;
  readonly closed: boolean;
}

const PROBE = '\u0000identity-probe';

/** OIDs of the parsers asked for; refuses non-identity parsers, which could not run in the worker. */
function rawTypesOf(parsers: ProxyQueryOptions['parsers']): number[] {
  if (!parsers) return [];
  const oids: number[] = [];
  for (const [k, fn] of Object.entries(parsers)) {
    let same = false;
    try {
      same = fn(PROBE, Number(k)) === PROBE;
    } catch {
      /* not an identity */
    }
    if (!same) throw new Error(`PGlite runs in a worker: only identity parsers can be used (type ${k})`);
    oids.push(Number(k));
  }
  return oids;
}

/**
 * Bootstrap of the worker: registers tsx's ESM hooks in the worker, then imports the worker
 * module (a .ts file). `execArgv: ['--import', 'tsx']` is not enough on Node 20 (the worker's
 * entry is resolved before the hooks apply), and this works the same under `node --import tsx`,
 * the tsx CLI and vitest.
 */
function bootstrap(): string {
  // A prebuilt server bundle (tests/helpers/server-bundle.ts) carries the worker beside it, compiled.
  if (import.meta.url.endsWith('.mjs')) return `import(${JSON.stringify(new URL('./pglite-worker.mjs', import.meta.url).href)});`;
  // tsx's ESM API entry (package exports "./esm/api" → import → ./dist/esm/api/index.mjs).
  const tsxDir = path.dirname(createRequire(import.meta.url).resolve('tsx/package.json'));
  const tsxApi = pathToFileURL(path.join(tsxDir, 'dist/esm/api/index.mjs')).href;
  const entry = new URL('./pglite-worker.ts', import.meta.url).href;
  return `import(${JSON.stringify(tsxApi)}).then((m) => { m.register(); return import(${JSON.stringify(entry)}); });`;
}

export class PgliteWorkerClient implements ProxyTransaction {
  private readonly pending = new Map<number, Pending>();
  private nextId = 1;
  private gzipStreams = 0;
  private lock: Promise<void> = Promise.resolve();
  private exited = false;
  private closing: Promise<void> | undefined;
  private crash: Error | undefined;
  /** Resolves once the database is open (the worker said so), like `PGlite.waitReady`. */
  readonly waitReady: Promise<void>;

  private constructor(private readonly worker: Worker) {
    this.waitReady = new Promise<void>((resolve, reject) => {
      const onHello = (m: WorkerHello) => {
        if (m.ready) {
          resolve();
          worker.on('message', (r: WorkerReply) => this.settle(r));
          this.idle();
        } else reject(new PgliteWorkerError(m.error));
      };
      worker.once('message', onHello);
      worker.once('exit', (code) => reject(this.crash ?? new Error(`The PGlite worker exited (code ${code}) before the database opened`)));
    });
    worker.on('error', (e) => {
      this.crash = e;
      this.fail(e);
    });
    worker.on('exit', (code) => {
      this.exited = true;
      this.fail(new Error(`The PGlite worker exited (code ${code})`));
    });
  }

  /** Starts a worker thread holding a PGlite in `dataDir` (in memory without one) and waits for it to open. */
  static async start(init: WorkerInit): Promise<PgliteWorkerClient> {
    const worker = new Worker(bootstrap(), {
      eval: true,
      workerData: init,
      execArgv: [],
      // The worker's console goes to ours; its stdin is not needed.
      stdin: false,
    });
    const client = new PgliteWorkerClient(worker);
    try {
      await client.waitReady;
    } catch (e) {
      await worker.terminate();
      throw e;
    }
    return client;
  }

  /** The whole database as a tarball (PGlite `dumpDataDir`, uncompressed), for starting other in-memory databases from it. */
  dumpDataDir(): Promise<Buffer> {
    return this.exclusive(async () => Buffer.from((await this.send({ op: 'dump' })) as ArrayBuffer));
  }

  /** True once closed (or the worker is gone). */
  get closed(): boolean {
    return this.exited || this.closing !== undefined;
  }

  /** A statement with bind parameters, outside any transaction (waits for one in progress). */
  query<T = Record<string, unknown>>(sql: string, params: unknown[] = [], options: ProxyQueryOptions = {}): Promise<ProxyResults<T>> {
    return this.exclusive(() => this.rawQuery<T>(sql, params, options));
  }

  /** One or more statements without parameters (simple protocol). */
  exec(sql: string): Promise<ProxyResults[]> {
    return this.exclusive(() => this.rawExec(sql));
  }

  /**
   * Runs `select` (one json column) under `COPY … TO '/dev/blob'` in the worker and returns the
   * rows as one JSON array in UTF-8, at most `limit` of them. The bytes are transferred, not copied,
   * and never parsed on this thread. `wrap` puts text around the array (an envelope).
   */
  copyJsonArray(select: string, limit: number, wrap?: JsonArrayWrap): Promise<{ bytes: Buffer; count: number; more: boolean }> {
    return this.exclusive(async () => {
      const r = (await this.send({ op: 'copyJsonArray', select, limit, ...(wrap ? { wrap } : {}) })) as JsonArrayResult;
      return { bytes: Buffer.from(r.bytes), count: r.count, more: r.more };
    });
  }

  /**
   * One page of a keyed JSON select (see `copyJsonPage` in the worker): the json values of at most
   * `limit` rows, each after a comma (`,v1,v2`), and the key of the last one.
   */
  copyJsonPage(
    select: string,
    limit: number,
    gzip?: { stream: number; before?: string; dropComma?: boolean },
  ): Promise<{ bytes: Buffer; count: number; more: boolean; lastKey?: string }> {
    return this.exclusive(async () => {
      const r = (await this.send({ op: 'copyJsonPage', select, limit, ...(gzip ? { gzip } : {}) })) as JsonPageResult;
      return { bytes: Buffer.from(r.bytes), count: r.count, more: r.more, ...(r.lastKey !== undefined ? { lastKey: r.lastKey } : {}) };
    });
  }

  /** A new id for a gzip stream of {@link copyJsonPage}. */
  newGzipStream(): number {
    return ++this.gzipStreams;
  }

  /** Ends gzip stream `stream` after `tail` and gives its last bytes; no tail abandons it. */
  async gzipEnd(stream: number, tail?: string): Promise<Buffer> {
    const r = (await this.send({ op: 'gzipEnd', stream, ...(tail !== undefined ? { tail } : {}) })) as JsonPageResult;
    return Buffer.from(r.bytes);
  }

  /** `COPY … FROM '/dev/blob'` with `data` as the input; the bytes are moved to the worker, not copied. */
  copyFrom(sql: string, data: Uint8Array<ArrayBuffer>): Promise<ProxyResults> {
    return this.exclusive(async () => {
      const blob = data.byteOffset === 0 && data.byteLength === data.buffer.byteLength ? data.buffer : data.slice().buffer;
      return fromWire(
        (await this.send({ op: 'query', sql, params: [], rowMode: 'object', rawTypes: [], blob }, [blob])) as WireResults,
      );
    });
  }

  /** BEGIN … COMMIT around `fn`, ROLLBACK when it throws; other statements wait meanwhile. */
  transaction<T>(fn: (tx: ProxyTransaction) => Promise<T>): Promise<T> {
    return this.exclusive(async () => {
      let done = false;
      const guard = () => {
        if (done) throw new Error('The transaction is over; use the database, not the finished transaction');
      };
      const tx: ProxyTransaction = {
        query: (sql, params = [], options = {}) => (guard(), this.rawQuery(sql, params, options)),
        exec: (sql) => (guard(), this.rawExec(sql)),
        // drizzle nests with savepoints on the transaction object; a nested call here just joins.
        transaction: (inner) => (guard(), inner(tx)),
        rollback: async () => {
          guard();
          await this.rawExec('ROLLBACK');
          done = true;
        },
        get closed() {
          return done;
        },
      };
      await this.rawExec('BEGIN');
      try {
        const result = await fn(tx);
        if (!done) await this.rawExec('COMMIT');
        return result;
      } catch (e) {
        if (!done && !this.exited) await this.rawExec('ROLLBACK').catch(() => {});
        throw e;
      } finally {
        done = true;
      }
    });
  }

  async rollback(): Promise<void> {
    throw new Error('rollback() is for a transaction object');
  }

  /** CHECKPOINT and close in the worker, then ends the thread. Safe to call twice. */
  close(): Promise<void> {
    return (this.closing ??= (async () => {
      if (!this.exited) {
        try {
          await this.exclusive(() => this.send({ op: 'close' }), true);
        } finally {
          await this.worker.terminate();
        }
      }
    })());
  }

  private async rawQuery<T>(sql: string, params: unknown[], options: ProxyQueryOptions): Promise<ProxyResults<T>> {
    const blob = options.blob ? await options.blob.arrayBuffer() : undefined;
    const r = (await this.send(
      { op: 'query', sql, params, rowMode: options.rowMode ?? 'object', rawTypes: rawTypesOf(options.parsers), ...(blob ? { blob } : {}) },
      blob ? [blob] : [],
    )) as WireResults;
    return fromWire<T>(r);
  }

  private async rawExec(sql: string): Promise<ProxyResults[]> {
    const rs = (await this.send({ op: 'exec', sql })) as WireResults[];
    return rs.map((r) => fromWire(r));
  }

  /** Runs `fn` when every earlier exclusive call has finished. */
  private exclusive<T>(fn: () => Promise<T>, closing = false): Promise<T> {
    if (this.closing && !closing) return Promise.reject(new Error('The database is closed'));
    const run = this.lock.then(fn);
    this.lock = run.then(
      () => {},
      () => {},
    );
    return run;
  }

  private send(req: DistributiveOmit<WorkerRequest, 'id'>, transfer: ArrayBuffer[] = []): Promise<unknown> {
    if (this.exited) return Promise.reject(new Error('The PGlite worker is not running'));
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      // Keep the process alive only while an answer is awaited (an idle database holds nothing open).
      if (this.pending.size === 1) this.worker.ref();
      this.worker.postMessage({ ...req, id } as WorkerRequest, transfer);
    });
  }

  private settle(r: WorkerReply): void {
    const p = this.pending.get(r.id);
    if (!p) return;
    this.pending.delete(r.id);
    this.idle();
    if (r.ok) p.resolve(r.result);
    else p.reject(new PgliteWorkerError(r.error));
  }

  private idle(): void {
    if (this.pending.size === 0) this.worker.unref();
  }

  private fail(e: Error): void {
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
  }
}

type DistributiveOmit<T, K extends PropertyKey> = T extends unknown ? Omit<T, K> : never;

function fromWire<T>(r: WireResults): ProxyResults<T> {
  const { blob, ...rest } = r;
  return { ...(rest as Omit<ProxyResults<T>, 'blob'>), ...(blob ? { blob: new Blob([blob]) } : {}) };
}
