import { boolean, date, doublePrecision, index, integer, jsonb, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

export const instruments = pgTable('instruments', {
  id: uuid('id').primaryKey().defaultRandom(),
  tag: text('tag').notNull().unique(),
  kind: text('kind', { enum: ['dp-flow', 'pressure', 'dp-level'] }).notNull(),
  service: text('service').notNull().default(''),
  location: text('location').notNull().default(''),
  lrv: doublePrecision('lrv').notNull(),
  urv: doublePrecision('urv').notNull(),
  unit: text('unit').notNull(),
  outputMode: text('output_mode', { enum: ['linear', 'sqrt-transmitter', 'sqrt-host'] }).notNull(),
  cutoffMode: text('cutoff_mode', { enum: ['none', 'clamp', 'linear'] }).notNull().default('none'),
  cutoffValue: doublePrecision('cutoff_value').notNull().default(0),
  tolerancePct: doublePrecision('tolerance_pct').notNull(),
  intervalDays: integer('interval_days').notNull(),
  primaryElement: jsonb('primary_element'),
  /** The process medium is hazardous: the flush before opening is required. */
  hazardousMedium: boolean('hazardous_medium').notNull().default(false),
  notes: text('notes').notNull().default(''),
  lastCalibratedOn: date('last_calibrated_on'),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});

export const standards = pgTable('standards', {
  id: uuid('id').primaryKey().defaultRandom(),
  kind: text('kind', { enum: ['pressure', 'current'] }).notNull(),
  description: text('description').notNull(),
  serial: text('serial').notNull().unique(),
  rangeMin: doublePrecision('range_min').notNull(),
  rangeMax: doublePrecision('range_max').notNull(),
  unit: text('unit').notNull(),
  accuracy: jsonb('accuracy').notNull(),
  resolution: doublePrecision('resolution').notNull(),
  certificateNo: text('certificate_no').notNull(),
  /** The laboratory that calibrated the standard ('' when not recorded). */
  calibratingLab: text('calibrating_lab').notNull().default(''),
  calibratedOn: date('calibrated_on').notNull(),
  dueOn: date('due_on').notNull(),
  certificateFileId: text('certificate_file_id'),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});

export const jobs = pgTable(
  'jobs',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    instrumentId: uuid('instrument_id')
      .notNull()
      .references(() => instruments.id),
    status: text('status', { enum: ['open', 'in-progress', 'submitted', 'returned', 'approved'] })
      .notNull()
      .default('open'),
    assigneeId: uuid('assignee_id'),
    createdBy: uuid('created_by'),
    dueOn: date('due_on').notNull(),
    permitNo: text('permit_no'),
    /** Preparation checklist (standards chosen, permit, bypass, acknowledgements) as JSON. */
    checklist: jsonb('checklist').notNull().default({}),
    notes: text('notes').notNull().default(''),
    revision: integer('revision').notNull().default(1),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('jobs_assignee_idx').on(t.assigneeId), index('jobs_status_idx').on(t.status)],
);
