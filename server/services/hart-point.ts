/**
 * The HART side of a captured point: the modem's command 3 readings within the hold window (or, when
 * the window held none, the nearest one at most {@link NEAREST_READING_MS} before its end), averaged,
 * converted to the run's unit, with shared/calc's digital and analog errors.
 */
import { convertPressure, hartPointErrors, isPressureUnitId } from '../../shared/calc';
import { unitOfCode } from '../../shared/protocol/hart';
import type { HartPoint } from '../../shared/schemas/hart-job';
import type { HartDynamicReading } from '../bench/hart-modem';

/** How far before the hold's end a lone reading may be taken for a point (a Stillpoint choice: about one poll and a half). */
export const NEAREST_READING_MS = 1500;

export interface HartPointContext {
  /** The run's unit and the transmitter's range in it. */
  unit: string;
  lrv: number;
  urv: number;
}

/** The point's HART values, or undefined when no usable reading covers the hold. */
export function hartPointOf(
  readings: readonly HartDynamicReading[],
  capture: { startMs: number; endMs: number; appliedDp: number; measuredMa: number },
  ctx: HartPointContext,
): HartPoint | undefined {
  let chosen = readings.filter((r) => r.at >= capture.startMs && r.at <= capture.endMs);
  if (!chosen.length) {
    const before = readings.filter((r) => r.at <= capture.endMs && r.at >= capture.endMs - NEAREST_READING_MS).at(-1);
    chosen = before ? [before] : [];
  }
  const toRun = (r: HartDynamicReading): number | undefined => {
    const unit = unitOfCode(r.pvUnitCode);
    if (unit === ctx.unit) return r.pv;
    if (unit && isPressureUnitId(unit) && isPressureUnitId(ctx.unit)) return convertPressure(r.pv, unit, ctx.unit);
    return undefined;
  };
  const pvs = chosen.map(toRun).filter((v): v is number => v !== undefined);
  if (!pvs.length || pvs.length !== chosen.length) return undefined;
  const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
  const pv = mean(pvs);
  const loopMa = mean(chosen.map((r) => r.loopMa));
  const e = hartPointErrors({ appliedDp: capture.appliedDp, digitalPv: pv, meterMa: capture.measuredMa, deviceMa: loopMa, lrv: ctx.lrv, urv: ctx.urv });
  if (!e) return undefined;
  return { pv, loopMa, n: chosen.length, digitalErrorPctSpan: e.digitalErrorPctSpan, analogErrorMa: e.analogErrorMa, analogErrorPctSpan: e.analogErrorPctSpan };
}
