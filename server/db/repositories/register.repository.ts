import { asc, desc, eq, getTableColumns, inArray, sql, type AnyColumn } from 'drizzle-orm';
import { INSTRUMENT_REGISTER, STANDARD_REGISTER, type RegisterSpec } from '../../../shared/schemas/registers';
import type { Instrument } from '../../../shared/schemas/instruments';
import type { Standard } from '../../../shared/schemas/standards';
import type { Db } from '../client';
import { instruments, jobs, runs, standards, users } from '../schema';
import { containsText } from './contains';
import { parsedRun } from './run.repository';

export type InstrumentRow = typeof instruments.$inferSelect;
export type InstrumentInsert = typeof instruments.$inferInsert;
export type StandardRow = typeof standards.$inferSelect;
export type StandardInsert = typeof standards.$inferInsert;
export type JobRow = typeof jobs.$inferSelect & { tag: string; assigneeName: string | null };

export interface ListQuery {
  q?: string;
  sort?: string;
  dir?: 'asc' | 'desc';
  page: number;
  pageSize: number;
}

/**
 * The total of a list when its page already tells it: a page that is not full and not empty (or
 * the first page, empty) is the last one, so the total is what came before it plus what is on it.
 * Otherwise undefined, and the rows are counted.
 */
function knownTotal(query: ListQuery, onPage: number): number | undefined {
  if (onPage >= query.pageSize || (onPage === 0 && query.page > 1)) return undefined;
  return (query.page - 1) * query.pageSize + onPage;
}

type RegisterTable = typeof instruments | typeof standards;

/** The table's column for a field the spec names; a spec naming a field the table lacks fails at once. */
function columnsOf(table: RegisterTable, plural: string) {
  const columns: Record<string, AnyColumn> = getTableColumns(table);
  return (field: string): AnyColumn => {
    const c = columns[field];
    if (!c) throw new Error(`The ${plural} table has no column ${field}`);
    return c;
  };
}

/**
 * The rows of one register (instruments, standards), as its spec describes them. A page of the
 * list matches the spec's search fields and sorts by one of its sortable fields (the first when
 * the query names none or another); ties are broken by the field that names a row, so paging is
 * stable.
 */
function registerRows<Row, Insert, Shown>(db: Db, table: RegisterTable, spec: RegisterSpec<Shown>) {
  const column = columnsOf(table, spec.plural);
  const key = column(spec.keyField);
  const sortable: readonly string[] = spec.sortable;
  const first = column(spec.sortable[0]);
  return {
    async list(query: ListQuery): Promise<{ items: Row[]; total: number }> {
      const where = containsText(Object.keys(spec.search).map(column), query.q);
      const col = query.sort && sortable.includes(query.sort) ? column(query.sort) : first;
      const items = (await db
        .select()
        .from(table)
        .where(where)
        .orderBy(query.dir === 'desc' ? desc(col) : asc(col), asc(key))
        .limit(query.pageSize)
        .offset((query.page - 1) * query.pageSize)) as Row[];
      const known = knownTotal(query, items.length);
      if (known !== undefined) return { items, total: known };
      const [count] = await db.select({ n: sql<number>`count(*)::int` }).from(table).where(where);
      return { items, total: count?.n ?? 0 };
    },
    /** Every row, in the list's first order. */
    async all(): Promise<Row[]> {
      return (await db.select().from(table).orderBy(asc(first), asc(key))) as Row[];
    },
    async get(id: string): Promise<Row | undefined> {
      const [row] = await db.select().from(table).where(eq(table.id, id)).limit(1);
      return row as Row | undefined;
    },
    /** The row named by `value` in the spec's key field (tag, serial). */
    async findByKey(value: string): Promise<Row | undefined> {
      const [row] = await db.select().from(table).where(eq(key, value)).limit(1);
      return row as Row | undefined;
    },
    async create(values: Insert): Promise<Row> {
      const [row] = await db
        .insert(table)
        .values(values as never)
        .returning();
      return row as Row;
    },
    /** All or none, in one transaction; how many were written. */
    async createMany(values: Insert[]): Promise<number> {
      if (!values.length) return 0;
      return db.transaction(async (tx) => (await tx.insert(table).values(values as never).returning({ id: table.id })).length);
    },
    async update(id: string, values: Partial<Insert>): Promise<Row | undefined> {
      const [row] = await db
        .update(table)
        .set({ ...values, updatedAt: new Date() } as never)
        .where(eq(table.id, id))
        .returning();
      return row as Row | undefined;
    },
  };
}

export function instrumentRepository(db: Db) {
  const rows = registerRows<InstrumentRow, InstrumentInsert, Instrument>(db, instruments, INSTRUMENT_REGISTER);
  return { ...rows, findByTag: rows.findByKey };
}

export function standardRepository(db: Db) {
  const rows = registerRows<StandardRow, StandardInsert, Standard>(db, standards, STANDARD_REGISTER);
  return {
    ...rows,
    findBySerial: rows.findByKey,
    /** The standards of `ids` that exist, in the order of `ids` (one query). */
    async getMany(ids: string[]): Promise<StandardRow[]> {
      if (!ids.length) return [];
      const found = await db.select().from(standards).where(inArray(standards.id, ids));
      const byId = new Map(found.map((r) => [r.id, r]));
      return ids.map((id) => byId.get(id)).filter((r): r is StandardRow => !!r);
    },
  };
}

export function jobRepository(db: Db) {
  const base = () =>
    db
      .select({ job: jobs, tag: instruments.tag, assigneeName: users.name })
      .from(jobs)
      .innerJoin(instruments, eq(instruments.id, jobs.instrumentId))
      .leftJoin(users, eq(users.id, jobs.assigneeId));
  const flat = (r: { job: typeof jobs.$inferSelect; tag: string; assigneeName: string | null }): JobRow => ({
    ...r.job,
    tag: r.tag,
    assigneeName: r.assigneeName,
  });
  return {
    async list(): Promise<JobRow[]> {
      return (await base().orderBy(asc(jobs.dueOn), asc(instruments.tag))).map(flat);
    },
    async get(id: string): Promise<JobRow | undefined> {
      const [row] = await base().where(eq(jobs.id, id)).limit(1);
      return row ? flat(row) : undefined;
    },
    async create(values: typeof jobs.$inferInsert): Promise<typeof jobs.$inferSelect> {
      const [row] = await db.insert(jobs).values(values).returning();
      return row!;
    },
    async runs(jobId: string): Promise<(typeof runs.$inferSelect)[]> {
      return (await db.select().from(runs).where(eq(runs.jobId, jobId)).orderBy(asc(runs.startedAt))).map(parsedRun);
    },
    async update(id: string, values: Partial<typeof jobs.$inferInsert>): Promise<typeof jobs.$inferSelect | undefined> {
      const [row] = await db
        .update(jobs)
        .set({ ...values, updatedAt: new Date() })
        .where(eq(jobs.id, id))
        .returning();
      return row;
    },
  };
}
