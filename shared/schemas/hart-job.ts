/**
 * HART in the job: what the preparation read from the transmitter (identity, commands 0 and 13;
 * configuration, command 15), how it compares with the register, how a mismatch was resolved, and
 * every write command sent with who asked and when. One value per job (`GET /api/jobs/:id/hart`);
 * frozen into the record at submission.
 */
import { z } from 'zod';
import { ReasonBodySchema } from './reason';

/**
 * What a captured point keeps of the HART device (PointCapture `hart`): the digital PV and the loop
 * current the device reports (command 3), means over the readings in the hold window, and the
 * digital and analog (D/A) errors of shared/calc `hartPointErrors`.
 */
export const HartPointSchema = z.object({
  /** Digital PV, run unit. */
  pv: z.number(),
  /** Loop current the device says it drives, mA. */
  loopMa: z.number(),
  /** Command 3 readings averaged. */
  n: z.number().int(),
  digitalErrorPctSpan: z.number(),
  analogErrorMa: z.number(),
  analogErrorPctSpan: z.number(),
});
export type HartPoint = z.infer<typeof HartPointSchema>;

/** Identity from commands 0 and 13. */
export const HartIdentityViewSchema = z.object({
  manufacturerId: z.number().int().nullable(),
  expandedDeviceType: z.number().int(),
  deviceId: z.number().int(),
  universalRevision: z.number().int(),
  deviceRevision: z.number().int(),
  softwareRevision: z.number().int(),
  tag: z.string(),
  descriptor: z.string(),
});
export type HartIdentityView = z.infer<typeof HartIdentityViewSchema>;

/** Configuration from command 15 (range in the device's own unit). */
export const HartConfigViewSchema = z.object({
  /** Unit id (shared/calc) of the device's range unit code, or null when Stillpoint does not map the code. */
  unit: z.string().nullable(),
  unitCode: z.number().int(),
  lrv: z.number(),
  urv: z.number(),
  /** Common table 3: 0 linear, 1 square root. */
  transferFunctionCode: z.number().int(),
  transferFunction: z.string(),
  dampingS: z.number(),
  writeProtect: z.boolean(),
  alarmSelection: z.number().int(),
});
export type HartConfigView = z.infer<typeof HartConfigViewSchema>;

export const HART_CHECK_FIELDS = ['tag', 'unit', 'range', 'transfer-function'] as const;
export type HartCheckField = (typeof HART_CHECK_FIELDS)[number];

/** One disagreement between the device and the register, in words. */
export const HartMismatchSchema = z.object({
  field: z.enum(HART_CHECK_FIELDS),
  device: z.string(),
  register: z.string(),
  message: z.string(),
});
export type HartMismatch = z.infer<typeof HartMismatchSchema>;

const StampSchema = z.object({ by: z.string(), byName: z.string(), at: z.string() });

/** What a write command sent and got back, and who asked for it. */
export const HartWriteSchema = z.object({
  command: z.number().int(),
  name: z.string(),
  /** The value sent, in words (e.g. `4.0012 mA`), or null for a command without data. */
  value: z.string().nullable(),
  request: z.string(),
  reply: z.string().nullable(),
  responseCode: z.number().int().nullable(),
  outcome: z.enum(['ok', 'error']),
  error: z.string().nullable(),
  at: z.string(),
  by: z.string(),
  byName: z.string(),
  /** The run or step it belonged to (e.g. `output-trim`), or null. */
  step: z.string().nullable(),
});
export type HartWrite = z.infer<typeof HartWriteSchema>;

/** A reading of the device's configuration at one moment. */
export const HartReadingSchema = z.object({
  identity: HartIdentityViewSchema,
  config: HartConfigViewSchema,
  at: z.string(),
  /** Whether the device answers command 80 (sensor trim points): `no` when it says "command not implemented". Absent on older readings. */
  sensorTrim: z.enum(['yes', 'no', 'unknown']).optional(),
});
export type HartReading = z.infer<typeof HartReadingSchema>;

/** A trim done by command: the loop-current (output) trim or the PV zero trim, with its readings. */
export const HartTrimSchema = z.object({
  id: z.string(),
  kind: z.enum(['output-trim', 'zero-trim']),
  status: z.enum(['running', 'done', 'failed', 'aborted']),
  /** What it is doing or did last, in words. */
  step: z.string(),
  /** The loop current the device is fixed at now, mA, or null when not fixed. */
  fixedMa: z.number().nullable(),
  /** Meter readings held at each fixed level: the two trim points, then the verification at 4, 12 and 20 mA. */
  readings: z.array(z.object({ stage: z.enum(['trim', 'verify']), fixedMa: z.number(), meterMa: z.number(), errorMa: z.number() })),
  /** Zero trim: the digital PV before and after command 43, device unit. */
  pvBefore: z.number().nullable().optional(),
  pvAfter: z.number().nullable().optional(),
  error: z.string().nullable(),
  startedAt: z.string(),
  endedAt: z.string().nullable(),
  by: z.string(),
  byName: z.string(),
  /** What the technician confirmed before the device was written to. */
  confirmed: z.array(z.string()),
});
export type HartTrim = z.infer<typeof HartTrimSchema>;

/** Body of `POST /api/jobs/:id/hart/output-trim`: the cautions confirmed. */
export const OutputTrimBodySchema = z.object({
  loopInManual: z.literal(true, { error: 'Confirm the loop is in manual (or its output is not used for control)' }),
  operatorsInformed: z.literal(true, { error: 'Confirm the operators are informed that the loop current will move' }),
});

/** Body of `POST /api/jobs/:id/hart/zero-trim`: zero pressure applied and held (both sides vented or equalised). */
export const ZeroTrimBodySchema = z.object({
  zeroHeld: z.literal(true, { error: 'Confirm zero pressure is applied and held' }),
});

/** A job's HART state. `asFound` null: not read yet. */
export const JobHartSchema = z.object({
  /** Whether the bench this server runs has a HART modem the job uses. */
  available: z.boolean(),
  asFound: HartReadingSchema.nullable(),
  asLeft: HartReadingSchema.nullable(),
  mismatches: z.array(HartMismatchSchema),
  /** How the mismatches were resolved: register corrected, or device recorded as found; null while open. */
  resolution: StampSchema.extend({ kind: z.enum(['register-corrected', 'recorded-as-found']), reason: z.string(), mismatches: z.array(HartMismatchSchema) }).nullable(),
  writes: z.array(HartWriteSchema),
  /** Trims done by command, oldest first (the one running last). */
  trims: z.array(HartTrimSchema),
  /** The device's loop current is fixed now (Stillpoint asked for it, or the device says so). */
  loopCurrentFixed: z.boolean(),
  /** What blocks a run, in words (empty when nothing). */
  blockers: z.array(z.string()),
});
export type JobHart = z.infer<typeof JobHartSchema>;

/** Body of the resolutions. */
export const HartReasonBodySchema = ReasonBodySchema;

/** What the frozen record keeps of the job's HART device (shared/schemas/records `hart`). */
export const FrozenHartSchema = JobHartSchema.omit({ available: true, loopCurrentFixed: true, blockers: true });
export type FrozenHart = z.infer<typeof FrozenHartSchema>;
