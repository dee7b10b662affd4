/**
 * Command codecs on literal data fields. Layouts are HCF_SPEC-127 (universal) and HCF_SPEC-151
 * (common practice) as remembered, not as read: the specifications were not available here.
 */
import { describe, expect, it } from 'vitest';
import { CMD38_RESET_CHANGED, CMD40_FIXED_CURRENT, CMD43_ZERO, CMD45_TRIM_ZERO, CMD46_TRIM_GAIN, CMD80_TRIM_POINTS, CMD81_TRIM_GUIDELINES, CMD82_WRITE_TRIM, CMD83_RESET_TRIM } from './common-practice-commands';
import { CMD0_IDENTITY, CMD13_TAG, CMD15_INFO, CMD1_PV, CMD2_CURRENT, CMD3_DYNAMIC, uniqueIdOf } from './universal-commands';
import { commandLabel, HART_COMMANDS } from './index';
import { hex } from './test-bytes';

const CMD0_R7 = hex('FE 26 0F 05 07 03 0C 10 00 12 34 56 05 04 00 09 00 60 01 60 01 01');

describe('universal commands (HCF_SPEC-127, from memory)', () => {
  it('command 0: decodes a 22-byte revision 7 reply and builds the long address from it', () => {
    const id = CMD0_IDENTITY.decodeResponse(CMD0_R7);
    expect(id).toEqual({
      expandedDeviceType: 0x260f,
      minPreamblesRequest: 5,
      universalRevision: 7,
      deviceRevision: 3,
      softwareRevision: 12,
      hardwareRevision: 2,
      physicalSignaling: 0,
      flags: 0,
      deviceId: 0x123456,
      minPreamblesResponse: 5,
      maxDeviceVariables: 4,
      configChangeCounter: 9,
      extendedStatus: 0,
      manufacturerId: 0x6001,
      privateLabel: 0x6001,
      deviceProfile: 1,
    });
    expect(uniqueIdOf(id!)).toEqual(hex('26 0F 12 34 56'));
    expect(CMD0_IDENTITY.encodeResponse(id!)).toEqual(CMD0_R7);
  });

  it('command 0: takes a 12-byte revision 5 reply, refuses a short one', () => {
    const r5 = CMD0_IDENTITY.decodeResponse(CMD0_R7.slice(0, 12));
    expect(r5).toMatchObject({ universalRevision: 7, deviceId: 0x123456 });
    expect(r5?.manufacturerId).toBeUndefined();
    expect(CMD0_IDENTITY.decodeResponse(CMD0_R7.slice(0, 11))).toBeUndefined();
  });

  it('command 1: unit code then PV', () => {
    expect(CMD1_PV.decodeResponse(hex('01 41 C8 00 00'))).toEqual({ unitCode: 1, value: 25 });
    expect(CMD1_PV.encodeResponse({ unitCode: 12, value: 4 })).toEqual(hex('0C 40 80 00 00'));
    expect(CMD1_PV.decodeResponse(hex('01 41 C8'))).toBeUndefined();
  });

  it('command 2: loop current and percent of range', () => {
    expect(CMD2_CURRENT.decodeResponse(hex('41 00 00 00 41 C8 00 00'))).toEqual({ currentMa: 8, percentOfRange: 25 });
  });

  it('command 3: loop current then up to four variables', () => {
    const data = hex('41 40 00 00 01 42 48 00 00 20 41 AC 00 00');
    expect(CMD3_DYNAMIC.decodeResponse(data)).toEqual({ currentMa: 12, variables: [{ unitCode: 1, value: 50 }, { unitCode: 32, value: 21.5 }] });
    expect(CMD3_DYNAMIC.encodeResponse({ currentMa: 12, variables: [{ unitCode: 1, value: 50 }, { unitCode: 32, value: 21.5 }] })).toEqual(data);
    expect(CMD3_DYNAMIC.decodeResponse(hex('41 40'))).toBeUndefined();
  });

  it('command 13: packed tag (6 bytes), descriptor (12), date (3)', () => {
    const data = hex('19 4B 71 C3 18 20 08 F2 4C 15 28 06 14 51 20 82 08 20 02 0C 7E');
    expect(CMD13_TAG.decodeResponse(data)).toEqual({ tag: 'FT-101', descriptor: 'BOILER FEED', date: { year: 2026, month: 12, day: 2 } });
    expect(CMD13_TAG.encodeResponse({ tag: 'FT-101', descriptor: 'boiler feed', date: { year: 2026, month: 12, day: 2 } })).toEqual(data);
  });

  it('command 15: alarm, transfer function, units, URV before LRV, damping, write protect', () => {
    const data = hex('00 01 01 42 C8 00 00 00 00 00 00 3F 00 00 00 00 FA 00');
    expect(CMD15_INFO.decodeResponse(data)).toEqual({ alarmSelection: 0, transferFunction: 1, rangeUnitCode: 1, urv: 100, lrv: 0, damping: 0.5, writeProtect: 0, privateLabel: 250, analogChannelFlags: 0 });
    expect(CMD15_INFO.decodeResponse(data.slice(0, 16))).toMatchObject({ writeProtect: 0 });
    expect(CMD15_INFO.decodeResponse(data.slice(0, 15))).toBeUndefined();
  });
});

describe('common-practice commands (HCF_SPEC-151, from memory)', () => {
  it('command 40: the fixed level in mA both ways; 0 leaves fixed current mode', () => {
    expect(CMD40_FIXED_CURRENT.encodeRequest({ currentMa: 4 })).toEqual(hex('40 80 00 00'));
    expect(CMD40_FIXED_CURRENT.encodeRequest({ currentMa: 0 })).toEqual(hex('00 00 00 00'));
    expect(CMD40_FIXED_CURRENT.decodeResponse(hex('41 A0 00 00'))).toEqual({ currentMa: 20 });
  });

  it('commands 45 and 46: the reference meter reading in mA', () => {
    expect(CMD45_TRIM_ZERO.encodeRequest({ currentMa: 4.05 })).toEqual(hex('40 81 99 9A'));
    expect(CMD46_TRIM_GAIN.encodeRequest({ currentMa: 20.05 })).toEqual(hex('41 A0 66 66'));
    expect(CMD45_TRIM_ZERO.decodeRequest(hex('40 81 99 9A'))?.currentMa).toBeCloseTo(4.05, 6);
    expect(CMD46_TRIM_GAIN.decodeRequest(hex('41 A0'))).toBeUndefined();
  });

  it('commands 38 and 43 carry no data', () => {
    expect(CMD43_ZERO.encodeRequest()).toEqual(new Uint8Array(0));
    expect(CMD38_RESET_CHANGED.encodeResponse()).toEqual(new Uint8Array(0));
  });

  it('commands 80–83: device variable trim points', () => {
    expect(CMD80_TRIM_POINTS.encodeRequest({ deviceVariable: 0 })).toEqual(hex('00'));
    expect(CMD80_TRIM_POINTS.decodeResponse(hex('00 01 00 00 00 00 42 C8 00 00'))).toEqual({ deviceVariable: 0, unitCode: 1, lower: 0, upper: 100 });
    const guidelines = hex('00 03 01 C0 A0 00 00 40 A0 00 00 42 B4 00 00 42 DC 00 00 41 20 00 00');
    expect(CMD81_TRIM_GUIDELINES.decodeResponse(guidelines)).toEqual({ deviceVariable: 0, trimPoints: 3, unitCode: 1, minLower: -5, maxLower: 5, minUpper: 90, maxUpper: 110, minDifferential: 10 });
    expect(CMD82_WRITE_TRIM.encodeRequest({ deviceVariable: 0, trimPoint: 2, unitCode: 1, value: 100 })).toEqual(hex('00 02 01 42 C8 00 00'));
    expect(CMD82_WRITE_TRIM.decodeRequest(hex('00 03 01 42 C8 00 00'))).toBeUndefined();
    expect(CMD83_RESET_TRIM.decodeResponse(hex('00'))).toEqual({ deviceVariable: 0 });
  });

  it('names every command it has a codec for', () => {
    expect([...HART_COMMANDS.keys()]).toEqual([0, 1, 2, 3, 13, 15, 38, 40, 43, 45, 46, 80, 81, 82, 83]);
    expect(commandLabel(3)).toBe('command 3 (read dynamic variables and loop current)');
    expect(commandLabel(99)).toBe('command 99');
  });
});
