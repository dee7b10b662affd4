import type { Db } from '../db/client';
import {
  instrumentRepository,
  standardRepository,
  type InstrumentInsert,
  type InstrumentRow,
  type ListQuery,
  type StandardInsert,
  type StandardRow,
} from '../db/repositories/register.repository';
import { INSTRUMENT_REGISTER, STANDARD_REGISTER, type RegisterSpec } from '../../shared/schemas/registers';
import { conflict, notFound } from '../errors';
import type { Instrument, InstrumentInputSchema } from '../../shared/schemas/instruments';
import type { AccuracySpec, Standard, StandardInputSchema } from '../../shared/schemas/standards';
import type { z } from 'zod';
import type { Actor, AuditService } from './audit.service';
import { addDays, dueState, isoDate } from './dates';
import { createSiteClock } from './site-clock';

type InstrumentParsed = z.output<typeof InstrumentInputSchema>;
type StandardParsed = z.output<typeof StandardInputSchema>;

export function toInstrument(r: InstrumentRow): Instrument {
  return {
    id: r.id,
    tag: r.tag,
    kind: r.kind,
    service: r.service,
    location: r.location,
    lrv: r.lrv,
    urv: r.urv,
    unit: r.unit,
    outputMode: r.outputMode,
    cutoffMode: r.cutoffMode,
    cutoffValue: r.cutoffValue,
    tolerancePct: r.tolerancePct,
    intervalDays: r.intervalDays,
    primaryElement: (r.primaryElement as Instrument['primaryElement']) ?? null,
    notes: r.notes,
    hazardousMedium: r.hazardousMedium,
    lastCalibratedOn: r.lastCalibratedOn,
    nextDueOn: r.lastCalibratedOn ? addDays(r.lastCalibratedOn, r.intervalDays) : null,
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  };
}

/** A standard as the API shows it; `today` is the site's today (site-clock.ts), UTC's when not given. */
export function toStandard(r: StandardRow, today = isoDate(new Date())): Standard {
  return {
    id: r.id,
    kind: r.kind,
    description: r.description,
    serial: r.serial,
    rangeMin: r.rangeMin,
    rangeMax: r.rangeMax,
    unit: r.unit,
    accuracy: r.accuracy as AccuracySpec,
    resolution: r.resolution,
    certificateNo: r.certificateNo,
    calibratingLab: r.calibratingLab,
    calibratedOn: r.calibratedOn,
    dueOn: r.dueOn,
    dueState: dueState(r.dueOn, today),
    certificateFileId: r.certificateFileId,
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  };
}

/** Whether a database error is a unique-key violation (PostgreSQL 23505, also from PGlite). */
const isUniqueViolation = (e: unknown) => (e as { code?: string } | null)?.code === '23505' || (e as { cause?: { code?: string } } | null)?.cause?.code === '23505';

/** The repository surface the entries use (instruments' and standards' alike). */
interface EntryRows<Row, Insert> {
  list: (q: ListQuery) => Promise<{ items: Row[]; total: number }>;
  get: (id: string) => Promise<Row | undefined>;
  findByKey: (value: string) => Promise<Row | undefined>;
  create: (values: Insert) => Promise<Row>;
  update: (id: string, values: Partial<Insert>) => Promise<Row | undefined>;
}

/**
 * The entries of one register: list, read, create and edit, each change audited. The field that
 * names a row (tag, serial) stays unique on create and on edit; a clash is a 409 on that field,
 * also when a concurrent save wins the race to the database's unique index.
 */
function registerEntries<Row extends { id: string }, Insert, Shown, Parsed extends Insert>(o: {
  rows: EntryRows<Row, Insert>;
  spec: RegisterSpec<Shown>;
  /** The key field in words: "tag", "serial number". */
  keyWords: string;
  show: (rows: Row[]) => Promise<Shown[]>;
  audit: AuditService;
}) {
  const { rows, spec } = o;
  const key = (v: Parsed | Row) => (v as Record<string, unknown>)[spec.keyField] as string;
  const one = async (row: Row) => (await o.show([row]))[0]!;
  const taken = () => conflict(`That ${o.keyWords} is already registered`, { [spec.keyField]: ['Already registered'] });
  const unique = async <T>(write: () => Promise<T>): Promise<T> => {
    try {
      return await write();
    } catch (e) {
      if (isUniqueViolation(e)) throw taken();
      throw e;
    }
  };
  return {
    async list(q: ListQuery): Promise<{ items: Shown[]; total: number }> {
      const { items, total } = await rows.list(q);
      return { items: await o.show(items), total };
    },
    async get(id: string): Promise<Shown> {
      const row = await rows.get(id);
      if (!row) throw notFound(`No such ${spec.noun}`);
      return one(row);
    },
    async create(actor: Actor, input: Parsed): Promise<Shown> {
      if (await rows.findByKey(key(input))) throw taken();
      const row = await unique(() => rows.create(input));
      const shown = await one(row);
      await o.audit.record(actor, `${spec.noun}.created`, spec.noun, row.id, undefined, shown);
      return shown;
    },
    async update(actor: Actor, id: string, input: Parsed): Promise<Shown> {
      const before = await rows.get(id);
      if (!before) throw notFound(`No such ${spec.noun}`);
      if (key(input) !== key(before) && (await rows.findByKey(key(input)))) throw taken();
      const row = await unique(() => rows.update(id, input));
      if (!row) throw notFound(`No such ${spec.noun}`); // removed since it was read
      const shown = await one(row);
      await o.audit.record(actor, `${spec.noun}.changed`, spec.noun, id, await one(before), shown);
      return shown;
    },
  };
}

export function createRegisterService(db: Db, audit: AuditService) {
  const clock = createSiteClock(db);
  return {
    instruments: registerEntries<InstrumentRow, InstrumentInsert, Instrument, InstrumentParsed>({
      rows: instrumentRepository(db),
      spec: INSTRUMENT_REGISTER,
      keyWords: 'tag',
      show: async (rows) => rows.map(toInstrument),
      audit,
    }),
    /** A standard's due state is the site's today's. */
    standards: registerEntries<StandardRow, StandardInsert, Standard, StandardParsed>({
      rows: standardRepository(db),
      spec: STANDARD_REGISTER,
      keyWords: 'serial number',
      show: async (rows) => {
        const today = await clock.today();
        return rows.map((r) => toStandard(r, today));
      },
      audit,
    }),
  };
}
export type RegisterService = ReturnType<typeof createRegisterService>;
