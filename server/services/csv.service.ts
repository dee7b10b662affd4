import Papa from 'papaparse';
import type { z } from 'zod';
import type { Db } from '../db/client';
import {
  instrumentRepository,
  standardRepository,
  type InstrumentInsert,
  type StandardInsert,
} from '../db/repositories/register.repository';
import { reviewRepository } from '../db/repositories/review.repository';
import { badRequest } from '../errors';
import { InstrumentInputSchema } from '../../shared/schemas/instruments';
import type { ImportReport, ImportRow } from '../../shared/schemas/register-csv';
import { INSTRUMENT_COLUMNS, INSTRUMENT_REQUIRED, STANDARD_COLUMNS, STANDARD_REQUIRED } from '../../shared/schemas/register-csv';
import { StandardInputSchema } from '../../shared/schemas/standards';
import { PastDateSchema } from '../../shared/schemas/dates';
import type { Actor, AuditService } from './audit.service';
import { guard, issuesToFields, nullableNum, num, parseCsv, quoteSeparated, text, type Parsed } from './csv-cells';
import { toInstrument, toStandard } from './register.service';

type InstrumentParsed = z.output<typeof InstrumentInputSchema>;
type StandardParsed = z.output<typeof StandardInputSchema>;

function instrumentFromCells(c: Record<string, string>) {
  const peKeys = INSTRUMENT_COLUMNS.filter((k) => k.startsWith('pe.'));
  const hasPe = peKeys.some((k) => (c[k] ?? '').trim() !== '');
  return {
    tag: text(c.tag) ?? '',
    kind: text(c.kind),
    service: text(c.service),
    location: text(c.location),
    lrv: num(c.lrv),
    urv: num(c.urv),
    unit: text(c.unit),
    outputMode: text(c.outputMode),
    cutoffMode: text(c.cutoffMode),
    cutoffValue: num(c.cutoffValue),
    tolerancePct: num(c.tolerancePct),
    intervalDays: num(c.intervalDays),
    notes: text(c.notes),
    primaryElement: hasPe
      ? {
          kind: 'orifice',
          pipeDiameterMm: num(c['pe.pipeDiameterMm']),
          boreDiameterMm: num(c['pe.boreDiameterMm']),
          taps: text(c['pe.taps']),
          fluid: text(c['pe.fluid']),
          densityKgM3: num(c['pe.densityKgM3']),
          viscosityPaS: num(c['pe.viscosityPaS']),
          kappa: num(c['pe.kappa']),
          upstreamPressurePa: num(c['pe.upstreamPressurePa']),
          flowUnit: text(c['pe.flowUnit']),
        }
      : null,
  };
}

function standardFromCells(c: Record<string, string>) {
  return {
    kind: text(c.kind),
    description: text(c.description) ?? '',
    serial: text(c.serial) ?? '',
    rangeMin: num(c.rangeMin),
    rangeMax: num(c.rangeMax),
    unit: text(c.unit) ?? '',
    accuracy: {
      pctReading: num(c.pctReading),
      pctFullScale: num(c.pctFullScale),
      floor: num(c.floor),
      certificateU: nullableNum(c.certificateU),
      certificateK: nullableNum(c.certificateK),
    },
    resolution: num(c.resolution),
    certificateNo: text(c.certificateNo) ?? '',
    calibratingLab: text(c.calibratingLab) ?? '',
    calibratedOn: text(c.calibratedOn) ?? '',
    dueOn: text(c.dueOn) ?? '',
  };
}

/** Builds the report; `seen` maps a key (tag / serial) to the row that first used it. */
function report(parsed: Parsed, rows: ImportRow[], dryRun: boolean, written: number): ImportReport {
  const valid = rows.filter((r) => r.ok).length;
  return { dryRun, total: rows.length, valid, invalid: rows.length - valid, fileErrors: parsed.fileErrors, rows, written };
}

/** Turns a report with errors into a 400 whose fields name each bad row: `row 3.tag`. */
function refuse(rep: ImportReport): never {
  const fields: Record<string, string[]> = {};
  for (const e of rep.fileErrors) (fields.file ??= []).push(e);
  for (const r of rep.rows) for (const [f, msgs] of Object.entries(r.errors)) fields[`row ${r.row}.${f}`] = msgs;
  throw badRequest(`Nothing was written: ${rep.invalid} of ${rep.total} rows have errors${rep.fileErrors.length ? ', and the file has problems' : ''}`, fields);
}

export function createCsvService(db: Db, audit: AuditService) {
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const writer = reviewRepository(db);

  async function checkInstruments(csv: string) {
    const parsed = parseCsv(csv, INSTRUMENT_COLUMNS, INSTRUMENT_REQUIRED);
    const existing = new Set((await instruments.all()).map((i) => i.tag.toUpperCase()));
    const seen = new Map<string, number>();
    const values: InstrumentInsert[] = [];
    const rows: ImportRow[] = parsed.rows.map(({ row, line, cells, problem }) => {
      const raw = instrumentFromCells(cells);
      const errors: Record<string, string[]> = {};
      if (problem) errors._row = [problem];
      const res = InstrumentInputSchema.safeParse(raw);
      if (!res.success) Object.assign(errors, issuesToFields(res.error.issues, (p) => p.replace(/^primaryElement\./, 'pe.').replace(/^primaryElement$/, 'pe')));
      const last = text(cells.lastCalibratedOn);
      if (last) {
        const date = PastDateSchema.safeParse(last);
        if (!date.success) errors.lastCalibratedOn = date.error.issues.map((i) => i.message);
      }
      const key = raw.tag.toUpperCase();
      if (key) {
        if (existing.has(key)) (errors.tag ??= []).push('Already registered');
        else if (seen.has(key)) (errors.tag ??= []).push(`Appears twice in the file (also row ${seen.get(key)})`);
        else seen.set(key, row);
      }
      const ok = Object.keys(errors).length === 0 && res.success;
      if (ok) values.push({ ...(res.data as InstrumentParsed), lastCalibratedOn: last ?? null });
      return { row, line, key: raw.tag, ok, errors, value: ok ? { ...(res.data as InstrumentParsed), lastCalibratedOn: last ?? null } : null };
    });
    return { parsed, rows, values };
  }

  async function checkStandards(csv: string) {
    const parsed = parseCsv(csv, STANDARD_COLUMNS, STANDARD_REQUIRED);
    const existing = new Set((await standards.all()).map((s) => s.serial.toUpperCase()));
    const seen = new Map<string, number>();
    const values: StandardInsert[] = [];
    const rows: ImportRow[] = parsed.rows.map(({ row, line, cells, problem }) => {
      const raw = standardFromCells(cells);
      const errors: Record<string, string[]> = {};
      if (problem) errors._row = [problem];
      const res = StandardInputSchema.safeParse(raw);
      if (!res.success) Object.assign(errors, issuesToFields(res.error.issues, (p) => p.replace(/^accuracy\./, '')));
      const key = raw.serial.toUpperCase();
      if (key) {
        if (existing.has(key)) (errors.serial ??= []).push('Already registered');
        else if (seen.has(key)) (errors.serial ??= []).push(`Appears twice in the file (also row ${seen.get(key)})`);
        else seen.set(key, row);
      }
      const ok = Object.keys(errors).length === 0 && res.success;
      if (ok) values.push(res.data as StandardParsed);
      return { row, line, key: raw.serial, ok, errors, value: ok ? (res.data as StandardParsed) : null };
    });
    return { parsed, rows, values };
  }

  return {
    /**
     * Checks a CSV of instruments. A dry run (the default) writes nothing and reports each row;
     * `confirm` writes every row in one transaction, and only when no row and nothing in the
     * file has an error (otherwise 400 naming each bad row).
     */
    async importInstruments(actor: Actor, csv: string, confirm: boolean): Promise<ImportReport> {
      const { parsed, rows, values } = await checkInstruments(csv);
      const rep = report(parsed, rows, !confirm, 0);
      if (!confirm) return rep;
      if (rep.invalid || rep.fileErrors.length) refuse(rep);
      const created = await writer.insertInstruments(values);
      for (const r of created) await audit.record(actor, 'instrument.created', 'instrument', r.id, undefined, { ...toInstrument(r), via: 'csv-import' });
      await audit.record(actor, 'instruments.imported', 'instrument', null, undefined, { rows: created.length, tags: created.map((r) => r.tag) });
      return { ...rep, written: created.length };
    },

    async importStandards(actor: Actor, csv: string, confirm: boolean): Promise<ImportReport> {
      const { parsed, rows, values } = await checkStandards(csv);
      const rep = report(parsed, rows, !confirm, 0);
      if (!confirm) return rep;
      if (rep.invalid || rep.fileErrors.length) refuse(rep);
      const created = await writer.insertStandards(values);
      for (const r of created) await audit.record(actor, 'standard.created', 'standard', r.id, undefined, { ...toStandard(r), via: 'csv-import' });
      await audit.record(actor, 'standards.imported', 'standard', null, undefined, { rows: created.length, serials: created.map((r) => r.serial) });
      return { ...rep, written: created.length };
    },

    /** The instrument register as CSV (our layout, INSTRUMENT_COLUMNS). */
    async exportInstruments(): Promise<string> {
      const rows = (await instruments.all()).map((r) => {
        const i = toInstrument(r);
        const pe = (i.primaryElement ?? {}) as Record<string, unknown>;
        const out: Record<string, unknown> = { ...i, lastCalibratedOn: i.lastCalibratedOn ?? '' };
        for (const k of INSTRUMENT_COLUMNS.filter((c) => c.startsWith('pe.'))) out[k] = pe[k.slice(3)] ?? '';
        return INSTRUMENT_COLUMNS.map((c) => guard(out[c]));
      });
      return Papa.unparse({ fields: [...INSTRUMENT_COLUMNS], data: rows }, { newline: '\r\n', quotes: quoteSeparated });
    },

    /** The standards register as CSV (STANDARD_COLUMNS). */
    async exportStandards(): Promise<string> {
      const rows = (await standards.all()).map((r) => {
        const a = r.accuracy as Record<string, unknown>;
        const out: Record<string, unknown> = {
          ...r,
          pctReading: a.pctReading ?? 0,
          pctFullScale: a.pctFullScale ?? 0,
          floor: a.floor ?? 0,
          certificateU: a.certificateU ?? '',
          certificateK: a.certificateK ?? '',
        };
        return STANDARD_COLUMNS.map((c) => guard(out[c]));
      });
      return Papa.unparse({ fields: [...STANDARD_COLUMNS], data: rows }, { newline: '\r\n', quotes: quoteSeparated });
    },
  };
}
export type CsvService = ReturnType<typeof createCsvService>;
