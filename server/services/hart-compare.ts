/**
 * The preparation's HART check, pure: the device's identity and configuration (commands 0, 13, 15)
 * against the register's entry, as disagreements in words. Tag, range and unit, and transfer
 * function are compared; damping and write protect are kept as found (the register holds neither).
 */
import { convertPressure, isPressureUnitId } from '../../shared/calc';
import { formatNumber, formatRange, unitLabel } from '../../shared/format';
import type { HartConfigView, HartIdentityView, HartMismatch } from '../../shared/schemas/hart-job';
import type { OutputMode } from '../../shared/schemas/instruments';

/** What the check needs of the register's entry. */
export interface RegisterView {
  tag: string;
  lrv: number;
  urv: number;
  unit: string;
  outputMode: OutputMode;
}

/**
 * Relative agreement of the range values, of the span: the device sends IEEE 754 single floats
 * (about 7 significant digits), and the register may hold a unit converted to more digits; 0.01 %
 * of span is a Stillpoint choice well above the float's resolution and below any real re-range.
 */
export const RANGE_AGREEMENT_OF_SPAN = 1e-4;

/** Register output mode → HART transfer function code (common table 3: 0 linear, 1 square root; from memory). */
export function transferCodeOf(mode: OutputMode): 0 | 1 {
  // A root taken in the host still has a linear transmitter.
  return mode === 'sqrt-transmitter' ? 1 : 0;
}

const describeMode = (mode: OutputMode) => (mode === 'sqrt-transmitter' ? 'square root in the transmitter' : mode === 'sqrt-host' ? 'linear (root in the host)' : 'linear');

/** HART tags are upper-case packed ASCII of up to 8 characters: compared upper-cased and trimmed. */
function sameTag(device: string, register: string): boolean {
  return device.trim().toUpperCase() === register.trim().toUpperCase().slice(0, 8);
}

/** The disagreements of the device with the register (empty: they agree). */
export function compareHartWithRegister(identity: Pick<HartIdentityView, 'tag'>, config: HartConfigView, register: RegisterView): HartMismatch[] {
  const out: HartMismatch[] = [];
  if (!sameTag(identity.tag, register.tag)) {
    out.push({ field: 'tag', device: identity.tag, register: register.tag, message: `Tag: the device says ${identity.tag || '(blank)'}, the register ${register.tag}` });
  }
  const deviceUnit = config.unit ?? `unit code ${config.unitCode}`;
  const deviceRange = config.unit ? formatRange(config.lrv, config.urv, config.unit) : `${formatNumber(config.lrv)}–${formatNumber(config.urv)} (${deviceUnit})`;
  const registerRange = formatRange(register.lrv, register.urv, register.unit);
  if (config.unit !== register.unit) {
    out.push({ field: 'unit', device: config.unit ? unitLabel(config.unit) : deviceUnit, register: unitLabel(register.unit), message: `Range unit: the device uses ${config.unit ? unitLabel(config.unit) : deviceUnit}, the register ${unitLabel(register.unit)}` });
  }
  // The range compared in the register's unit where both are pressure units Stillpoint converts.
  const convertible = config.unit !== null && isPressureUnitId(config.unit) && isPressureUnitId(register.unit);
  const lrv = convertible ? convertPressure(config.lrv, config.unit as never, register.unit as never) : config.lrv;
  const urv = convertible ? convertPressure(config.urv, config.unit as never, register.unit as never) : config.urv;
  const span = Math.abs(register.urv - register.lrv) || 1;
  const off = Math.max(Math.abs(lrv - register.lrv), Math.abs(urv - register.urv)) / span;
  if (!(convertible || config.unit === register.unit) || off > RANGE_AGREEMENT_OF_SPAN) {
    out.push({ field: 'range', device: deviceRange, register: registerRange, message: `Range: the device is ranged ${deviceRange}, the register says ${registerRange}` });
  }
  const wanted = transferCodeOf(register.outputMode);
  if (config.transferFunctionCode !== wanted) {
    out.push({
      field: 'transfer-function',
      device: config.transferFunction,
      register: describeMode(register.outputMode),
      message: `Transfer function: the device is set to ${config.transferFunction}, the register says ${describeMode(register.outputMode)}`,
    });
  }
  return out;
}

/**
 * The register's entry corrected to the device for the fields that disagree (range, unit, output
 * mode; never the tag, which names the loop): what a correction with a reason writes.
 */
export function correctedRegister(config: HartConfigView, register: RegisterView & { cutoffMode: string }, mismatches: readonly HartMismatch[]): Partial<RegisterView & { cutoffMode: 'none' }> {
  const patch: Partial<RegisterView & { cutoffMode: 'none' }> = {};
  const has = (f: HartMismatch['field']) => mismatches.some((m) => m.field === f);
  if ((has('range') || has('unit')) && config.unit && isPressureUnitId(config.unit)) Object.assign(patch, { lrv: config.lrv, urv: config.urv, unit: config.unit });
  if (has('transfer-function')) {
    if (config.transferFunctionCode === 1) patch.outputMode = 'sqrt-transmitter';
    else if (config.transferFunctionCode === 0) {
      // A linear transmitter: keep a root in the host if the register had one, else linear (a linear output has no cutoff).
      patch.outputMode = register.outputMode === 'sqrt-host' ? 'sqrt-host' : 'linear';
      if (patch.outputMode === 'linear') patch.cutoffMode = 'none';
    }
  }
  return patch;
}
