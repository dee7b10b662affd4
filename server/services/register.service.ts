import type { Db } from '../db/client';
import {
  instrumentRepository,
  standardRepository,
  type InstrumentRow,
  type ListQuery,
  type StandardRow,
} from '../db/repositories/register.repository';
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

export function createRegisterService(db: Db, audit: AuditService) {
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const clock = createSiteClock(db);
  return {
    async listInstruments(q: ListQuery) {
      const { items, total } = await instruments.list(q);
      return { items: items.map(toInstrument), total };
    },
    async getInstrument(id: string): Promise<Instrument> {
      const row = await instruments.get(id);
      if (!row) throw notFound('No such instrument');
      return toInstrument(row);
    },
    async createInstrument(actor: Actor, input: InstrumentParsed): Promise<Instrument> {
      if (await instruments.findByTag(input.tag)) throw conflict('That tag is already registered', { tag: ['Already registered'] });
      const row = await instruments.create(input);
      await audit.record(actor, 'instrument.created', 'instrument', row.id, undefined, toInstrument(row));
      return toInstrument(row);
    },
    async updateInstrument(actor: Actor, id: string, input: InstrumentParsed): Promise<Instrument> {
      const before = await instruments.get(id);
      if (!before) throw notFound('No such instrument');
      if (input.tag !== before.tag && (await instruments.findByTag(input.tag))) throw conflict('That tag is already registered', { tag: ['Already registered'] });
      const row = await instruments.update(id, input);
      await audit.record(actor, 'instrument.changed', 'instrument', id, toInstrument(before), toInstrument(row!));
      return toInstrument(row!);
    },
    async listStandards(q: ListQuery) {
      const { items, total } = await standards.list(q);
      const today = await clock.today();
      return { items: items.map((r) => toStandard(r, today)), total };
    },
    async getStandard(id: string): Promise<Standard> {
      const row = await standards.get(id);
      if (!row) throw notFound('No such standard');
      return toStandard(row, await clock.today());
    },
    async createStandard(actor: Actor, input: StandardParsed): Promise<Standard> {
      if (await standards.findBySerial(input.serial)) throw conflict('That serial number is already registered', { serial: ['Already registered'] });
      const row = await standards.create(input);
      await audit.record(actor, 'standard.created', 'standard', row.id, undefined, toStandard(row));
      return toStandard(row);
    },
    async updateStandard(actor: Actor, id: string, input: StandardParsed): Promise<Standard> {
      const before = await standards.get(id);
      if (!before) throw notFound('No such standard');
      const row = await standards.update(id, input);
      await audit.record(actor, 'standard.changed', 'standard', id, toStandard(before), toStandard(row!));
      return toStandard(row!);
    },
  };
}
export type RegisterService = ReturnType<typeof createRegisterService>;
