import { asc, desc, eq, getTableColumns, ilike, inArray, or, sql, type AnyColumn, type SQL } from 'drizzle-orm';
import { INSTRUMENT_REGISTER, STANDARD_REGISTER, type RegisterSpec } from '../../../shared/schemas/registers';
import type { Instrument } from '../../../shared/schemas/instruments';
import type { Standard } from '../../../shared/schemas/standards';
import type { Db } from '../client';
import { instruments, jobs, runs, standards, users } from '../schema';
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

/**
 * A page of a register as its spec describes it: the search matches the spec's fields, the sort
 * is one of its sortable fields (the first when the query names none or another), and ties are
 * broken by the field that names a row, so paging is stable.
 */
async function listPage<Row, Shown>(db: Db, table: RegisterTable, spec: RegisterSpec<Shown>, query: ListQuery): Promise<{ items: Row[]; total: number }> {
  const columns: Record<string, AnyColumn> = getTableColumns(table);
  const column = (field: string): AnyColumn => {
    const c = columns[field];
    if (!c) throw new Error(`The ${spec.plural} table has no column ${field}`);
    return c;
  };
  const where: SQL | undefined = query.q ? or(...Object.keys(spec.search).map((f) => ilike(column(f), `%${query.q}%`))) : undefined;
  const sortable: readonly string[] = spec.sortable;
  const col = column(query.sort && sortable.includes(query.sort) ? query.sort : spec.sortable[0]);
  const items = (await db
    .select()
    .from(table)
    .where(where)
    .orderBy(query.dir === 'desc' ? desc(col) : asc(col), asc(column(spec.keyField)))
    .limit(query.pageSize)
    .offset((query.page - 1) * query.pageSize)) as Row[];
  const known = knownTotal(query, items.length);
  if (known !== undefined) return { items, total: known };
  const [count] = await db.select({ n: sql<number>`count(*)::int` }).from(table).where(where);
  return { items, total: count?.n ?? 0 };
}

export function instrumentRepository(db: Db) {
  return {
    list: (query: ListQuery) => listPage<InstrumentRow, Instrument>(db, instruments, INSTRUMENT_REGISTER, query),
    async all(): Promise<InstrumentRow[]> {
      return db.select().from(instruments).orderBy(asc(instruments.tag));
    },
    async get(id: string): Promise<InstrumentRow | undefined> {
      const [row] = await db.select().from(instruments).where(eq(instruments.id, id)).limit(1);
      return row;
    },
    async findByTag(tag: string): Promise<InstrumentRow | undefined> {
      const [row] = await db.select().from(instruments).where(eq(instruments.tag, tag)).limit(1);
      return row;
    },
    async create(values: InstrumentInsert): Promise<InstrumentRow> {
      const [row] = await db.insert(instruments).values(values).returning();
      return row!;
    },
    async createMany(values: InstrumentInsert[]): Promise<number> {
      if (!values.length) return 0;
      return db.transaction(async (tx) => {
        const rows = await tx.insert(instruments).values(values).returning({ id: instruments.id });
        return rows.length;
      });
    },
    async update(id: string, values: Partial<InstrumentInsert>): Promise<InstrumentRow | undefined> {
      const [row] = await db
        .update(instruments)
        .set({ ...values, updatedAt: new Date() })
        .where(eq(instruments.id, id))
        .returning();
      return row;
    },
  };
}

export function standardRepository(db: Db) {
  return {
    list: (query: ListQuery) => listPage<StandardRow, Standard>(db, standards, STANDARD_REGISTER, query),
    async all(): Promise<StandardRow[]> {
      return db.select().from(standards).orderBy(asc(standards.dueOn));
    },
    async get(id: string): Promise<StandardRow | undefined> {
      const [row] = await db.select().from(standards).where(eq(standards.id, id)).limit(1);
      return row;
    },
    /** The standards of `ids` that exist, in the order of `ids` (one query). */
    async getMany(ids: string[]): Promise<StandardRow[]> {
      if (!ids.length) return [];
      const rows = await db.select().from(standards).where(inArray(standards.id, ids));
      const byId = new Map(rows.map((r) => [r.id, r]));
      return ids.map((id) => byId.get(id)).filter((r): r is StandardRow => !!r);
    },
    async findBySerial(serial: string): Promise<StandardRow | undefined> {
      const [row] = await db.select().from(standards).where(eq(standards.serial, serial)).limit(1);
      return row;
    },
    async create(values: StandardInsert): Promise<StandardRow> {
      const [row] = await db.insert(standards).values(values).returning();
      return row!;
    },
    async createMany(values: StandardInsert[]): Promise<number> {
      if (!values.length) return 0;
      return db.transaction(async (tx) => (await tx.insert(standards).values(values).returning({ id: standards.id })).length);
    },
    async update(id: string, values: Partial<StandardInsert>): Promise<StandardRow | undefined> {
      const [row] = await db
        .update(standards)
        .set({ ...values, updatedAt: new Date() })
        .where(eq(standards.id, id))
        .returning();
      return row;
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
