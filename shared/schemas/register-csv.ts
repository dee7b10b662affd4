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
