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
import type { ImportReport, ImportRow } from '../../shared/schemas/records';
import { StandardInputSchema } from '../../shared/schemas/standards';
import { PastDateSchema } from '../../shared/schemas/dates';
import type { Actor, AuditService } from './audit.service';
import { toInstrument, toStandard } from './register.service';

/** Largest number of data rows one import takes. */
export const MAX_IMPORT_ROWS = 5000;

/**
 * Our CSV layout for the instrument register: one row per tag, header names as below (the JSON
 * field names; primary-element fields prefixed `pe.`). Export writes exactly these columns, so an
 * export can be edited and imported elsewhere.
 */
export const INSTRUMENT_COLUMNS = [
  'tag',
  'kind',
  'service',
  'location',
  'lrv',
  'urv',
  'unit',
  'outputMode',
  'cutoffMode',
  'cutoffValue',
  'tolerancePct',
  'intervalDays',
  'lastCalibratedOn',
  'notes',
  'pe.pipeDiameterMm',
  'pe.boreDiameterMm',
  'pe.taps',
  'pe.fluid',
  'pe.densityKgM3',
  'pe.viscosityPaS',
  'pe.kappa',
  'pe.upstreamPressurePa',
  'pe.flowUnit',
] as const;
const INSTRUMENT_REQUIRED = ['tag', 'kind', 'lrv', 'urv', 'unit', 'outputMode', 'tolerancePct', 'intervalDays'];

/** Our CSV layout for the standards register; accuracy fields are flattened. */
export const STANDARD_COLUMNS = [
  'kind',
  'description',
  'serial',
  'rangeMin',
  'rangeMax',
  'unit',
  'pctReading',
  'pctFullScale',
  'floor',
  'certificateU',
  'certificateK',
  'resolution',
  'certificateNo',
  'calibratedOn',
  'dueOn',
  'calibratingLab',
] as const;
const STANDARD_REQUIRED = ['kind', 'description', 'serial', 'rangeMin', 'rangeMax', 'unit', 'resolution', 'certificateNo', 'calibratedOn', 'dueOn'];

const NUMBER_RE = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/;

/** A cell as a number when it looks like one; empty → undefined; anything else stays text so zod names the field. */
function num(cell: string | undefined): number | string | undefined {
  const s = (cell ?? '').trim();
  if (!s) return undefined;
  return NUMBER_RE.test(s) ? Number(s) : s;
}
function text(cell: string | undefined): string | undefined {
  const s = (cell ?? '').trim();
  // Undo the spreadsheet-formula guard that export adds (at the start and after a separator).
  return s ? (/^'[=+\-@]/.test(s) ? s.slice(1) : s).replace(SEPARATED_GUARDED, '$1$2') : undefined;
}
function nullableNum(cell: string | undefined): number | string | null {
  return num(cell) ?? null;
}

/** Separators a spreadsheet may split a cell on, by locale or by guessing: comma, semicolon, tab, bar. */
const SEPARATOR = '[,;\\t|]';
/** A formula character right after a separator (spaces allowed between). */
const SEPARATED_FORMULA = new RegExp(`(${SEPARATOR})(\\s*)([=+\\-@])`, 'g');
/** The same, guarded by export: `;'=`. */
const SEPARATED_GUARDED = new RegExp(`(${SEPARATOR}\\s*)'([=+\\-@])`, 'g');

/**
 * Cells that a spreadsheet would run as a formula are prefixed with ' (OWASP CSV injection
 * guidance), at the start of the cell and after any separator inside it: a spreadsheet set to
 * another separator (semicolon locales) splits `a;=1+1;b` into cells, the middle one a formula.
 */
function guard(v: unknown): unknown {
  if (typeof v !== 'string') return v;
  const start = /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
  return start.replace(SEPARATED_FORMULA, "$1$2'$3");
}

/** Papa's `quotes`: quote every text cell holding a separator, whatever the export's own one. */
const quoteSeparated = (v: unknown) => typeof v === 'string' && new RegExp(SEPARATOR).test(v);

function issuesToFields(issues: readonly z.core.$ZodIssue[], rename: (path: string) => string): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const i of issues) {
    const key = rename(i.path.map(String).join('.')) || '_row';
    (out[key] ??= []).push(i.message);
  }
  return out;
}

interface Parsed {
  headers: string[];
  rows: Array<{ row: number; line: number; cells: Record<string, string>; problem?: string }>;
  fileErrors: string[];
}

/** Parses CSV text with a header row; reports missing and unknown columns as file errors. */
export function parseCsv(textIn: string, columns: readonly string[], required: readonly string[]): Parsed {
  const source = textIn.replace(/^\uFEFF/, '');
  const result = Papa.parse<Record<string, string>>(source, {
    header: true,
    skipEmptyLines: 'greedy',
    transformHeader: (h) => h.trim(),
  });
  const headers = (result.meta.fields ?? []).filter((h) => h !== '');
  const fileErrors: string[] = [];
  const missing = required.filter((c) => !headers.includes(c));
  if (missing.length) fileErrors.push(`Missing column${missing.length > 1 ? 's' : ''}: ${missing.join(', ')}`);
  const unknown = headers.filter((h) => !columns.includes(h));
  if (unknown.length) fileErrors.push(`Unknown column${unknown.length > 1 ? 's' : ''}: ${unknown.join(', ')} (expected some of: ${columns.join(', ')})`);
  const dupes = headers.filter((h, i) => headers.indexOf(h) !== i);
  if (dupes.length) fileErrors.push(`Column named twice: ${[...new Set(dupes)].join(', ')}`);
  if (result.data.length > MAX_IMPORT_ROWS) fileErrors.push(`The file has ${result.data.length} rows; at most ${MAX_IMPORT_ROWS} are taken at once`);
  if (!result.data.length && !fileErrors.length) fileErrors.push('The file has a header but no rows');

  // Line numbers: count physical lines consumed before each row (quoted fields may span lines).
  const problems = new Map<number, string>();
  for (const e of result.errors) {
    if (e.code === 'MissingQuotes') {
      // An unterminated quote swallows the rest of the file, so it is in the last row (Papa's
      // own row number for this error is not the data row's index).
      if (result.data.length) problems.set(result.data.length - 1, 'A quoted cell has no closing quote (it runs to the end of the file)');
      else fileErrors.push('A quoted cell has no closing quote');
    } else if (typeof e.row === 'number') problems.set(e.row, e.message);
    else fileErrors.push(e.message);
  }
  const lines = lineStarts(source, result.data.length);
  return {
    headers,
    rows: result.data.slice(0, MAX_IMPORT_ROWS).map((cells, i) => ({
      row: i + 1,
      line: lines[i] ?? i + 2,
      cells,
      ...(problems.has(i) ? { problem: problems.get(i)! } : {}),
    })),
    fileErrors,
  };
}

/** The 1-based line on which each data row starts (skipping the header and blank lines). */
function lineStarts(source: string, count: number): number[] {
  const out: number[] = [];
  let line = 1;
  let inQuotes = false;
  let rowStart = true;
  let header = true;
  let blank = true;
  let startLine = 1;
  for (let i = 0; i <= source.length && out.length < count; i++) {
    const ch = source[i];
    if (rowStart) {
      startLine = line;
      rowStart = false;
      blank = true;
    }
    if (ch === undefined || (!inQuotes && (ch === '\n' || ch === '\r'))) {
      if (ch === '\r' && source[i + 1] === '\n') i++;
      if (header) header = false;
      else if (!blank) out.push(startLine);
      line++;
      rowStart = true;
      continue;
    }
    if (ch === '"') inQuotes = !inQuotes;
    else if (ch === '\n') line++;
    if (ch.trim() !== '' && ch !== ',') blank = false;
  }
  return out;
}

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
        const pe = (r.primaryElement ?? {}) as Record<string, unknown>;
        const out: Record<string, unknown> = {
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
          lastCalibratedOn: r.lastCalibratedOn ?? '',
          notes: r.notes,
        };
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
