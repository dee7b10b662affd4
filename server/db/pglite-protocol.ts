/**
 * Messages between the main thread ({@link PgliteWorkerClient}) and the PGlite worker
 * (pglite-worker.ts). Everything here crosses a thread by structured clone, so it holds data
 * only: no functions, no class instances.
 */

/** What the worker is started with (`workerData`). */
export interface WorkerInit {
  /** PGlite data directory; absent for an in-memory database. */
  dataDir?: string;
  /** An in-memory database's starting contents: a tarball from `dumpDataDir` (tests start from a migrated, seeded template). */
  loadDataDir?: ArrayBuffer;
  /**
   * Nice value the worker thread gives itself (it only ever lowers its priority); absent or 0: the
   * process's priority.
   */
  nice?: number;
}

export type WorkerRequest =
  | {
      id: number;
      op: 'query';
      sql: string;
      params: unknown[];
      rowMode: 'object' | 'array';
      /** Type OIDs whose values are returned as the server's text, unparsed (drizzle's identity parsers). */
      rawTypes: number[];
      /** Input of `COPY … FROM '/dev/blob'`. */
      blob?: ArrayBuffer;
    }
  | { id: number; op: 'exec'; sql: string }
  | {
      id: number;
      op: 'copyJsonArray';
      /** A SELECT whose single column is one json value per row; no bind parameters (COPY takes none). */
      select: string;
      /** Rows to put in the array at most; a row beyond it only sets `more`. */
      limit: number;
      /** Text around the array: `prefix`, the array, then `suffix[0]` (all rows) or `suffix[1]` (more than `limit`). */
      wrap?: JsonArrayWrap;
    }
  | {
      id: number;
      op: 'copyJsonPage';
      /** A SELECT of two columns, a text key and one json value, per row; no bind parameters. */
      select: string;
      /** Rows to return at most; a row beyond it only sets `more`. */
      limit: number;
      /**
       * Compress into the worker's gzip stream `stream` (opened on first use) instead of returning
       * the page as is: `before` is put in front of the page, and `dropComma` leaves out its
       * leading comma. The reply's bytes are then whatever compressed output the page flushed.
       */
      gzip?: { stream: number; before?: string; dropComma?: boolean };
    }
  | {
      id: number;
      op: 'gzipEnd';
      stream: number;
      /** Last text of the document; absent to abandon the stream (client gone). */
      tail?: string;
    }
  | { id: number; op: 'dump' }
  | { id: number; op: 'close' };

/** A PostgreSQL error's fields, as PGlite reports them. */
export interface WireError {
  message: string;
  name?: string;
  stack?: string;
  code?: string;
  severity?: string;
  detail?: string;
  hint?: string;
  position?: string;
  where?: string;
  schema?: string;
  table?: string;
  column?: string;
  dataType?: string;
  constraint?: string;
  routine?: string;
}

export interface WireResults {
  rows: unknown[];
  fields: { name: string; dataTypeID: number }[];
  affectedRows?: number;
  command?: string;
  rowCount?: number;
  /** Output of `COPY … TO '/dev/blob'`. */
  blob?: ArrayBuffer;
}

export type WorkerReply =
  | { id: number; ok: true; result: WireResults | WireResults[] | JsonArrayResult | ArrayBuffer | null }
  | { id: number; ok: false; error: WireError };

export interface JsonArrayWrap {
  prefix: string;
  suffix: [whenAll: string, whenMore: string];
}

/** A JSON array as UTF-8 bytes, built in the worker. */
export interface JsonArrayResult {
  bytes: ArrayBuffer;
  /** Rows in the array. */
  count: number;
  /** True when the SELECT had more rows than `limit`. */
  more: boolean;
}

/** One page of JSON values, each after a comma, built in the worker. */
export interface JsonPageResult {
  /** UTF-8 `,v1,v2,…` (empty when no row). */
  bytes: ArrayBuffer;
  count: number;
  more: boolean;
  /** Key column of the last row returned (to ask for the page after it); absent when no row. */
  lastKey?: string;
}

/** First message of the worker: ready, or why it could not open the database. */
export type WorkerHello = { ready: true } | { ready: false; error: WireError };

export const ERROR_FIELDS = ['code', 'severity', 'detail', 'hint', 'position', 'where', 'schema', 'table', 'column', 'dataType', 'constraint', 'routine'] as const;
