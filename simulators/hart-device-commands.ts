/**
 * What the simulated HART transmitter answers to each command, given the rig's transmitter. Pure
 * apart from the link it is handed: the rig owns the physics and the trims, this file owns the
 * HART view of them (configuration, status bits, response codes).
 */
import { convertPressure, isPressureUnitId } from '../shared/calc';
import {
  CMD0_IDENTITY,
  CMD13_TAG,
  CMD15_INFO,
  CMD1_PV,
  CMD2_CURRENT,
  CMD3_DYNAMIC,
  CMD40_FIXED_CURRENT,
  CMD45_TRIM_ZERO,
  CMD46_TRIM_GAIN,
  DEVICE_STATUS,
  unitOfCode,
  type HartDate,
} from '../shared/protocol/hart';
import { FIXED_CURRENT_LIMITS, type TransmitterConfig, type TransmitterReading, type TransmitterTrim } from './rig-model';

/** The simulated device's own configuration (what commands 0, 13 and 15 report beside the transmitter's range). */
export interface HartDeviceConfig {
  /** Up to 8 characters, packed ASCII. Default `FT-101`. */
  tag: string;
  /** Up to 16 characters, packed ASCII. Default `SIM DP FLOW`. */
  descriptor: string;
  date: HartDate;
  /** PV and range unit (common table 2). Default 1, inH2O at 68 °F. */
  unitCode: number;
  /** Refuses writes with response code 7. Default false. */
  writeProtect: boolean;
  /** Alarm selection code (common table 6). Default 0, high. */
  alarmSelection: number;
  /** Polling address; not 0 puts the loop in multidrop (fixed 4 mA; command 40 refused). Default 0. */
  pollingAddress: number;
  /** Expanded device type, two bytes (an invented one). Default 0x3A51. */
  expandedDeviceType: number;
  /** 24-bit device id. Default 0x00B2C7. */
  deviceId: number;
}

export const DEFAULT_HART_CONFIG: HartDeviceConfig = {
  tag: 'FT-101',
  descriptor: 'SIM DP FLOW',
  date: { year: 2026, month: 11, day: 2 },
  unitCode: 1,
  writeProtect: false,
  alarmSelection: 0,
  pollingAddress: 0,
  expandedDeviceType: 0x3a51,
  deviceId: 0x00b2c7,
};

/** What the device needs of the rig. */
export interface HartTransmitterLink {
  /** The rig's pressure unit. */
  unit: string;
  transmitter(): TransmitterConfig;
  /** The transmitter's output now (advances the rig to now). */
  read(): TransmitterReading;
  trim(): TransmitterTrim;
  setTrim(trim: Partial<TransmitterTrim>): void;
}

/** Device state kept across commands. */
export interface HartDeviceState {
  config: HartDeviceConfig;
  configChanged: boolean;
  coldStart: boolean;
  configChangeCounter: number;
  /** Sensor temperature reported as the secondary variable, °C. */
  sensorTempC: number;
}

/** A handled command: response code and data. */
export interface HartAnswer {
  responseCode: number;
  data: Uint8Array;
}

const NONE = new Uint8Array(0);
const code = (responseCode: number): HartAnswer => ({ responseCode, data: NONE });

/** Rig unit → device unit; the rig unit when the device's code is not a pressure unit we can convert to. */
function toDeviceUnit(value: number, link: HartTransmitterLink, unitCode: number): number {
  const unit = unitOfCode(unitCode);
  return unit && isPressureUnitId(unit) && isPressureUnitId(link.unit) && unit !== link.unit ? convertPressure(value, link.unit, unit) : value;
}

/** The field device status byte. */
export function deviceStatus(state: HartDeviceState, link: HartTransmitterLink, reading: TransmitterReading): number {
  const t = link.transmitter();
  const span = Math.abs(t.urv - t.lrv);
  // Sensor limits of the simulated sensor: the range widened by its span each way (a simulator choice).
  const outOfLimits = reading.pv < Math.min(t.lrv, t.urv) - span || reading.pv > Math.max(t.lrv, t.urv) + span;
  return (
    (t.failure !== 'none' ? DEVICE_STATUS.malfunction : 0) |
    (state.configChanged ? DEVICE_STATUS.configurationChanged : 0) |
    (state.coldStart ? DEVICE_STATUS.coldStart : 0) |
    (link.trim().fixedMa !== null ? DEVICE_STATUS.loopCurrentFixed : 0) |
    (reading.saturated ? DEVICE_STATUS.loopCurrentSaturated : 0) |
    (outOfLimits ? DEVICE_STATUS.pvOutOfLimits : 0)
  );
}

function loopTrim(state: HartDeviceState, link: HartTransmitterLink, level: 4 | 20, data: Uint8Array): HartAnswer {
  const codec = level === 4 ? CMD45_TRIM_ZERO : CMD46_TRIM_GAIN;
  const request = codec.decodeRequest(data);
  if (!request) return code(5);
  if (state.config.writeProtect) return code(7);
  if (state.config.pollingAddress !== 0) return code(11);
  const fixed = link.trim().fixedMa;
  // The device must be fixed at the trim point (common practice; 9 "incorrect loop current mode or value", from memory).
  if (fixed === null || Math.abs(fixed - level) > 1e-3) return code(9);
  const error = request.currentMa - level;
  if (!Number.isFinite(error) || error > 1) return code(3);
  if (error < -1) return code(4);
  const trim = link.trim();
  link.setTrim(level === 4 ? { loopAt4Ma: trim.loopAt4Ma + error } : { loopAt20Ma: trim.loopAt20Ma + error });
  markChanged(state);
  return { responseCode: 0, data: codec.encodeResponse(request) };
}

function markChanged(state: HartDeviceState): void {
  state.configChanged = true;
  state.configChangeCounter = (state.configChangeCounter + 1) & 0xffff;
}

/** Answers one command; unknown commands get 64, "command not implemented". */
export function answerHartCommand(state: HartDeviceState, link: HartTransmitterLink, command: number, data: Uint8Array): HartAnswer {
  const c = state.config;
  const t = link.transmitter();
  switch (command) {
    case 0:
      return {
        responseCode: 0,
        data: CMD0_IDENTITY.encodeResponse({
          expandedDeviceType: c.expandedDeviceType,
          minPreamblesRequest: 5,
          universalRevision: 7,
          deviceRevision: 1,
          softwareRevision: 3,
          hardwareRevision: 1,
          physicalSignaling: 0,
          flags: 0,
          deviceId: c.deviceId,
          minPreamblesResponse: 5,
          maxDeviceVariables: 2,
          configChangeCounter: state.configChangeCounter,
          extendedStatus: 0,
          manufacturerId: 0x6001,
          privateLabel: 0x6001,
          deviceProfile: 1,
        }),
      };
    case 1:
      return { responseCode: 0, data: CMD1_PV.encodeResponse({ unitCode: c.unitCode, value: toDeviceUnit(link.read().pv, link, c.unitCode) }) };
    case 2: {
      const r = link.read();
      return { responseCode: 0, data: CMD2_CURRENT.encodeResponse({ currentMa: r.commandedMa, percentOfRange: r.outputFraction * 100 }) };
    }
    case 3: {
      const r = link.read();
      const variables = [
        { unitCode: c.unitCode, value: toDeviceUnit(r.pv, link, c.unitCode) },
        { unitCode: 32, value: state.sensorTempC }, // 32: °C (common table 2, from memory)
      ];
      return { responseCode: 0, data: CMD3_DYNAMIC.encodeResponse({ currentMa: r.commandedMa, variables }) };
    }
    case 13:
      return { responseCode: 0, data: CMD13_TAG.encodeResponse({ tag: c.tag, descriptor: c.descriptor, date: c.date }) };
    case 15:
      return {
        responseCode: 0,
        data: CMD15_INFO.encodeResponse({
          alarmSelection: c.alarmSelection,
          transferFunction: t.outputMode === 'sqrt-transmitter' ? 1 : 0,
          rangeUnitCode: c.unitCode,
          urv: toDeviceUnit(t.urv, link, c.unitCode),
          lrv: toDeviceUnit(t.lrv, link, c.unitCode),
          damping: t.dampingS,
          writeProtect: c.writeProtect ? 1 : 0,
        }),
      };
    case 38:
      state.configChanged = false;
      return code(0);
    case 40: {
      const request = CMD40_FIXED_CURRENT.decodeRequest(data);
      if (!request) return code(5);
      if (c.pollingAddress !== 0) return code(11);
      if (request.currentMa === 0) {
        link.setTrim({ fixedMa: null });
        return { responseCode: 0, data: CMD40_FIXED_CURRENT.encodeResponse({ currentMa: 0 }) };
      }
      if (!(request.currentMa <= FIXED_CURRENT_LIMITS.high)) return code(3);
      if (request.currentMa < FIXED_CURRENT_LIMITS.low) return code(4);
      link.setTrim({ fixedMa: request.currentMa });
      return { responseCode: 0, data: CMD40_FIXED_CURRENT.encodeResponse({ currentMa: request.currentMa }) };
    }
    case 43: {
      if (c.writeProtect) return code(7);
      const r = link.read();
      const span = Math.abs(t.urv - t.lrv);
      // Zero is accepted within 10 % of span of the sensed value (a simulator choice; real limits are device-specific).
      if (r.pv > 0.1 * span) return code(9);
      if (r.pv < -0.1 * span) return code(10);
      link.setTrim({ sensorZero: link.trim().sensorZero - r.pv });
      markChanged(state);
      return code(0);
    }
    case 45:
      return loopTrim(state, link, 4, data);
    case 46:
      return loopTrim(state, link, 20, data);
    default:
      // Includes the device variable trim commands 80–83: this simulated device does not offer sensor trim points.
      return code(64);
  }
}
