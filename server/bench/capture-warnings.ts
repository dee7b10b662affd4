/**
 * The words of the capture engine's warnings, as the capture screen and the record show them.
 * Point numbers are 1-based; pressures are in the run's unit, written as the screens write them.
 */
import { dpDecimals, formatFixed, unitLabel } from '../../shared/format';
import { HOLD_REASON_TEXT, type HoldReason } from '../../shared/calc';

export const warningText = {
  disconnect: (device: string, reason: string, point: number) =>
    `The ${device === 'pressure' ? 'pressure calibrator' : 'current meter'} disconnected (${reason}); the hold at point ${point} was discarded and restarts when it is back`,
  unconvertible: (unit: string, runUnit: string) => `The calibrator reads in ${unitLabel(unit)}, which cannot be converted to ${unitLabel(runUnit)}`,
  // No numbers here: the capture screen states the one back-off target, in the unit as the screen writes it.
  overshoot: (point: number, approach: 'up' | 'down') =>
    `Overshoot at point ${point}: the applied DP went past the capture window; approach the target again from ${approach === 'up' ? 'below' : 'above'}`,
  overrange: (value: number, limit: number, dpSpan: number, unit: string) =>
    `The applied pressure ${formatFixed(value, dpDecimals(dpSpan))} ${unitLabel(unit)} is past the over-range limit of ${formatFixed(limit, dpDecimals(dpSpan))} ${unitLabel(unit)}: release pressure now to protect the transmitter`,
  ne43: (ma: number, kind: string) => `Loop current ${ma.toFixed(3)} mA is outside the NE 43 measurement range (3.8–20.5 mA): ${kind}`,
  leak: (point: number, ratePctSpanPerMin: number) =>
    `Leak at point ${point}: the applied DP moves ${Math.abs(ratePctSpanPerMin).toFixed(3)} % of span per minute with the source isolated; auto-capture waits until the hold is leak-free`,
  unstable: (point: number, reasons: readonly HoldReason[]) =>
    `Point ${point} has not settled: ${
      reasons
        .filter((x) => x !== 'hold-time')
        .map((x) => HOLD_REASON_TEXT[x])
        .join(', ') || 'readings keep moving'
    }`,
};
