/**
 * Reading and writing CSV cells for the register import and export: parsing with row and line
 * numbers, numbers and text from cells, and the spreadsheet-formula guard.
 */
import Papa from 'papaparse';
import type { z } from 'zod';

/** Largest number of data rows one import takes. */
export const MAX_IMPORT_ROWS = 5000;

const NUMBER_RE = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/;

/** A cell as a number when it looks like one; empty → undefined; anything else stays text so zod names the field. */
export function num(cell: string | undefined): number | string | undefined {
  const s = (cell ?? '').trim();
  if (!s) return undefined;
  return NUMBER_RE.test(s) ? Number(s) : s;
}
export function text(cell: string | undefined): string | undefined {
  const s = (cell ?? '').trim();
  // Undo the spreadsheet-formula guard that export adds (at the start and after a separator).
  return s ? (/^'[=+\-@]/.test(s) ? s.slice(1) : s).replace(SEPARATED_GUARDED, '$1$2') : undefined;
}
export function nullableNum(cell: string | undefined): number | string | null {
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
export function guard(v: unknown): unknown {
  if (typeof v !== 'string') return v;
  const start = /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
  return start.replace(SEPARATED_FORMULA, "$1$2'$3");
}

/** Papa's `quotes`: quote every text cell holding a separator, whatever the export's own one. */
export const quoteSeparated = (v: unknown) => typeof v === 'string' && new RegExp(SEPARATOR).test(v);

export function issuesToFields(issues: readonly z.core.$ZodIssue[], rename: (path: string) => string): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const i of issues) {
    const key = rename(i.path.map(String).join('.')) || '_row';
    (out[key] ??= []).push(i.message);
  }
  return out;
}

export interface Parsed {
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
