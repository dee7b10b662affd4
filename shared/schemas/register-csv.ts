import { z } from 'zod';

/**
 * The CSV layouts of the two registers, shared by the server (import and export) and the client
 * (the import dialog names the columns).
 */

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
export const INSTRUMENT_REQUIRED: readonly string[] = ['tag', 'kind', 'lrv', 'urv', 'unit', 'outputMode', 'tolerancePct', 'intervalDays'];

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
export const STANDARD_REQUIRED: readonly string[] = ['kind', 'description', 'serial', 'rangeMin', 'rangeMax', 'unit', 'resolution', 'certificateNo', 'calibratedOn', 'dueOn'];

/** CSV import body: the text (or a file in a multipart form), dry run unless `confirm` is true. */
export const ImportBodySchema = z.object({
  csv: z.string().min(1, 'The file is empty').max(2_000_000, 'The file is larger than 2 MB'),
  confirm: z
    .union([z.boolean(), z.enum(['true', 'false', '1', '0'])])
    .default(false)
    .transform((v) => v === true || v === 'true' || v === '1'),
});

export const ImportRowSchema = z.object({
  /** 1-based data row (the header is row 0). */
  row: z.number().int(),
  /** Line in the file where the row starts. */
  line: z.number().int(),
  /** Key shown in the preview (tag or serial). */
  key: z.string(),
  ok: z.boolean(),
  /** Field → messages. */
  errors: z.record(z.string(), z.array(z.string())),
  /** The parsed values (as they would be written) when ok. */
  value: z.record(z.string(), z.unknown()).nullable(),
});
export type ImportRow = z.infer<typeof ImportRowSchema>;

export const ImportReportSchema = z.object({
  dryRun: z.boolean(),
  total: z.number().int(),
  valid: z.number().int(),
  invalid: z.number().int(),
  /** Problems with the file as a whole (missing columns, unknown columns, parse errors). */
  fileErrors: z.array(z.string()),
  rows: z.array(ImportRowSchema),
  written: z.number().int(),
});
export type ImportReport = z.infer<typeof ImportReportSchema>;
