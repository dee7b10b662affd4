/**
 * Digital and analog errors of a HART transmitter at one point (common practice: the digital PV
 * against the applied pressure isolates the sensor and its trims; the reference meter's loop
 * current against the current the device says it drives isolates the output stage, the D/A):
 *
 * - digital error = (digital PV − applied) / |URV − LRV| × 100, % of DP span: the PV of a DP
 *   transmitter is DP whatever the transfer function, so the error is on the DP span;
 * - analog (D/A) error = meter mA − device loop current mA, and × 100 / 16 as % of the 4–20 mA span.
 *
 * Pure: no I/O, no clock. Plain numbers for now (units named in each TSDoc).
 */

/** The 4–20 mA output span, mA (IEC 60381-1 live-zero signal, common practice). */
export const LOOP_SPAN_MA = 16;

/** Input of {@link hartPointErrors}; pressures in one unit (the run's). */
export interface HartPointInput {
  /** Applied DP, mean over the hold, run unit. */
  appliedDp: number;
  /** Digital PV from the device (command 1 or 3), already in the run unit. */
  digitalPv: number;
  /** Reference meter's loop current, mean over the hold, mA. */
  meterMa: number;
  /** Loop current the device reports it drives (command 2 or 3), mA. */
  deviceMa: number;
  /** Range of the transmitter, run unit. */
  lrv: number;
  urv: number;
}

/** Digital and analog errors of one point. */
export interface HartPointErrors {
  /** Digital PV − applied, run unit. */
  digitalError: number;
  /** Digital error, % of DP span. */
  digitalErrorPctSpan: number;
  /** Meter − device loop current, mA. */
  analogErrorMa: number;
  /** Analog error, % of the 16 mA span. */
  analogErrorPctSpan: number;
}

/**
 * The point's digital and analog (D/A) errors; `undefined` when an input is not finite or the
 * span is zero (cannot compute).
 */
export function hartPointErrors(p: HartPointInput): HartPointErrors | undefined {
  const span = Math.abs(p.urv - p.lrv);
  if (![p.appliedDp, p.digitalPv, p.meterMa, p.deviceMa, p.lrv, p.urv].every(Number.isFinite) || span === 0) return undefined;
  const digitalError = p.digitalPv - p.appliedDp;
  const analogErrorMa = p.meterMa - p.deviceMa;
  return { digitalError, digitalErrorPctSpan: (digitalError / span) * 100, analogErrorMa, analogErrorPctSpan: (analogErrorMa / LOOP_SPAN_MA) * 100 };
}

/**
 * Whether a loop-current verification point passes: the meter's reading, mA, within `toleranceMa`
 * of the current the device is fixed at, mA (after a loop-current trim the two agree within the
 * meter's uncertainty; the tolerance is the caller's).
 */
export function withinTrimTolerance(meterMa: number, fixedMa: number, toleranceMa: number): boolean {
  return Number.isFinite(meterMa) && Math.abs(meterMa - fixedMa) <= toleranceMa;
}
