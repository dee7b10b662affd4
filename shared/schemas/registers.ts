import type { Instrument } from './instruments';
import { INSTRUMENT_COLUMNS, STANDARD_COLUMNS } from './register-csv';
import type { Standard } from './standards';

/**
 * One register's facts that the server (its list query, API path, CSV export, files) and the
 * register page both use, stated once: a search box names the fields the server searches, and the
 * page's first sort is the server's fallback sort.
 */
export interface RegisterSpec<Row> {
  /** What one row is; its files are kept under it. */
  noun: 'instrument' | 'standard';
  /** The plural names the API path (`/api/instruments`), the CSV export's file and the page. */
  plural: 'instruments' | 'standards';
  /** The field that names a row (in titles, toasts, buttons) and breaks ties in every sort. */
  keyField: keyof Row & string;
  /** The fields a search matches (case-insensitive, anywhere in the text), with their words in the search box. */
  search: Partial<Record<keyof Row & string, string>>;
  /** The fields a list may be sorted by; the first is the sort of a list that names none or another. */
  sortable: readonly [keyof Row & string, ...(keyof Row & string)[]];
  /** The CSV layout (import and export). */
  csvColumns: readonly string[];
  /** The kind of file kept beside each row. */
  files: 'datasheet' | 'certificate';
}

export const INSTRUMENT_REGISTER: RegisterSpec<Instrument> = {
  noun: 'instrument',
  plural: 'instruments',
  keyField: 'tag',
  search: { tag: 'tag', service: 'service', location: 'location' },
  sortable: ['tag', 'service', 'location', 'outputMode', 'intervalDays', 'lastCalibratedOn'],
  csvColumns: INSTRUMENT_COLUMNS,
  files: 'datasheet',
};

/** Standards list soonest-due first: the register is read for what needs sending out. */
export const STANDARD_REGISTER: RegisterSpec<Standard> = {
  noun: 'standard',
  plural: 'standards',
  keyField: 'serial',
  search: { description: 'description', serial: 'serial', certificateNo: 'certificate' },
  sortable: ['dueOn', 'description', 'serial', 'kind'],
  csvColumns: STANDARD_COLUMNS,
  files: 'certificate',
};

/** The API path of a register's collection. */
export const registerPath = (spec: { plural: string }) => `/api/${spec.plural}`;

/** The words of a register's search box: "Search tag, service, location…". */
export const searchPrompt = (spec: { search: Partial<Record<string, string>> }) => `Search ${Object.values(spec.search).join(', ')}…`;
