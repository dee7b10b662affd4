import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PgliteWorkerClient, PgliteWorkerError } from './pglite-worker-client';

describe('PgliteWorkerClient (PGlite in a worker thread)', () => {
  let db: PgliteWorkerClient;

  beforeAll(async () => {
    db = await PgliteWorkerClient.start({});
    await db.exec('CREATE TABLE t (id int PRIMARY KEY, note text NOT NULL)');
  }, 120_000);

  afterAll(async () => {
    await db?.close();
  });

  it('runs a long query in the worker while this thread keeps turning', async () => {
    // Counted in event-loop turns, not in time: PGlite on this thread would run the whole query in
    // one synchronous WebAssembly call, so no turn could happen until it returned.
    let turns = 0;
    let running = true;
    const spin = () => {
      if (!running) return;
      turns++;
      setImmediate(spin);
    };
    setImmediate(spin);
    try {
      const r = await db.query<{ s: string }>('SELECT sum(g)::text AS s FROM generate_series(1, 300000) g');
      expect(r.rows[0]!.s).toBe('45000150000');
    } finally {
      running = false;
    }
    expect(turns).toBeGreaterThan(100);
  });

  it('passes drizzle-style options: array rows and identity parsers leave timestamps as text', async () => {
    const identity = (v: unknown) => v;
    const r = await db.query<unknown[]>("SELECT '2024-05-06 07:08:09+00'::timestamptz AS at, 42::int8 AS n, '{\"a\":1}'::jsonb AS j", [], {
      rowMode: 'array',
      parsers: { 1184: identity, 1114: identity },
    });
    expect(r.rows).toEqual([['2024-05-06 07:08:09+00', 42, { a: 1 }]]);
    expect(r.fields.map((f) => f.name)).toEqual(['at', 'n', 'j']);
    // Default parsing still applies without the identity parser.
    const d = await db.query<{ at: Date }>("SELECT '2024-05-06 07:08:09+00'::timestamptz AS at");
    expect(d.rows[0]!.at).toBeInstanceOf(Date);
    // A parser that is not an identity cannot run in the worker: refused, not silently ignored.
    await expect(db.query('SELECT 1', [], { parsers: { 23: (v) => Number(v) * 2 } })).rejects.toThrow(/identity parsers/);
  });

  it('commits a transaction, and rolls it back when the callback throws', async () => {
    await db.transaction(async (tx) => {
      await tx.query('INSERT INTO t VALUES ($1, $2)', [1, 'kept']);
      await tx.query('INSERT INTO t VALUES ($1, $2)', [2, 'kept too']);
    });
    await expect(
      db.transaction(async (tx) => {
        await tx.query('INSERT INTO t VALUES ($1, $2)', [3, 'rolled back']);
        throw new Error('changed my mind');
      }),
    ).rejects.toThrow('changed my mind');
    const r = await db.query<{ id: number }>('SELECT id FROM t ORDER BY id');
    expect(r.rows.map((x) => x.id)).toEqual([1, 2]);
  });

  it('keeps other statements out of a transaction until it ends', async () => {
    let release!: () => void;
    const gate = new Promise<void>((r) => (release = r));
    const tx = db.transaction(async (t) => {
      await t.query('INSERT INTO t VALUES (10, $1)', ['inside']);
      await gate;
      throw new Error('abort');
    });
    // Issued while the transaction is open: must neither see nor join it.
    const outside = db.query<{ n: number }>('SELECT count(*)::int AS n FROM t WHERE id = 10');
    await new Promise((r) => setTimeout(r, 50));
    release();
    await expect(tx).rejects.toThrow('abort');
    expect((await outside).rows[0]!.n).toBe(0);
  });

  it('reports PostgreSQL errors as Errors with the server message and code', async () => {
    const err = await db.query('INSERT INTO t VALUES (1, $1)', ['dup']).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(PgliteWorkerError);
    expect(err).toBeInstanceOf(Error);
    expect((err as PgliteWorkerError).message).toBe('duplicate key value violates unique constraint "t_pkey"');
    expect((err as PgliteWorkerError).code).toBe('23505');
    expect((err as PgliteWorkerError).constraint).toBe('t_pkey');
    // A RAISE from a trigger function arrives with its own text (the audit trail's append-only guard works so).
    await db.exec(`CREATE FUNCTION no_delete() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 't is append-only'; END $$;
      CREATE TRIGGER t_no_delete BEFORE DELETE ON t FOR EACH ROW EXECUTE FUNCTION no_delete();`);
    await expect(db.exec('DELETE FROM t')).rejects.toThrow('t is append-only');
    // The session is usable after errors.
    expect((await db.query<{ one: number }>('SELECT 1 AS one')).rows[0]!.one).toBe(1);
  });

  it('copies in CSV and out JSON through /dev/blob', async () => {
    await db.exec('CREATE TABLE c (id int, note text)');
    await db.copyFrom(`COPY c FROM '/dev/blob' WITH (FORMAT csv)`, new TextEncoder().encode('1,"a ""q"", b"\n2,\n3,"back\\slash"\n'));
    const all = await db.copyJsonArray(`SELECT json_build_object('id', id, 'note', note) FROM c ORDER BY id`, 10, { prefix: '{"items":', suffix: [',"more":false}', ',"more":true}'] });
    expect(JSON.parse(all.bytes.toString('utf8'))).toEqual({
      items: [
        { id: 1, note: 'a "q", b' },
        { id: 2, note: null },
        { id: 3, note: 'back\\slash' },
      ],
      more: false,
    });
    const two = await db.copyJsonArray(`SELECT json_build_object('id', id) FROM c ORDER BY id`, 2);
    expect(JSON.parse(two.bytes.toString('utf8'))).toEqual([{ id: 1 }, { id: 2 }]);
    expect(two.more).toBe(true);
    const none = await db.copyJsonArray(`SELECT json_build_object('id', id) FROM c WHERE false`, 2);
    expect(none.bytes.toString('utf8')).toBe('[]');
  });
});
