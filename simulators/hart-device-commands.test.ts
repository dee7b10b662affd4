/**
 * The simulated HART transmitter's answers on the rig's own transmitter model: what the commands
 * change in the loop current the meter reads. Response codes as remembered from HCF_SPEC-127/-151.
 */
import { describe, expect, it } from 'vitest';
import { CMD15_INFO, CMD1_PV, CMD2_CURRENT, CMD40_FIXED_CURRENT, CMD45_TRIM_ZERO, CMD46_TRIM_GAIN, DEVICE_STATUS } from '../shared/protocol/hart';
import { convertPressure } from '../shared/calc';
import { answerHartCommand, deviceStatus } from './hart-device-commands';
import { SimRig } from './sim-rig';

function rig(transmitter = {}): { r: SimRig; ask: (command: number, data?: Uint8Array) => ReturnType<typeof answerHartCommand> } {
  let t = 0;
  const r = new SimRig({ now: () => (t += 100), transmitter, source: { timeConstantS: 0.01, isolateBand: 1e-5 } });
  return { r, ask: (command, data = new Uint8Array(0)) => answerHartCommand(r.hart.state, r.hart.link, command, data) };
}

describe('simulated HART transmitter', () => {
  it('reports the PV and the current it drives; the meter sees the D/A error on top', () => {
    const { r, ask } = rig({ daErrorAt4Ma: 0.05, daErrorAt20Ma: 0.05 });
    r.apply({ setpoint: { value: 50 } });
    r.snapshot();
    expect(CMD1_PV.decodeResponse(ask(1).data)?.value).toBeCloseTo(50, 3);
    expect(CMD2_CURRENT.decodeResponse(ask(2).data)?.currentMa).toBeCloseTo(12, 4);
    expect(r.readLoopCurrent()).toBeCloseTo(12.05, 4);
  });

  it('fixed current drives the loop; 45 and 46 refuse unless fixed at 4 and 20 mA, then correct the D/A error', () => {
    const { r, ask } = rig({ daErrorAt4Ma: 0.05, daErrorAt20Ma: -0.03 });
    expect(ask(45, CMD45_TRIM_ZERO.encodeRequest({ currentMa: 4.05 })).responseCode).toBe(9);
    expect(ask(40, CMD40_FIXED_CURRENT.encodeRequest({ currentMa: 4 })).responseCode).toBe(0);
    expect(deviceStatus(r.hart.state, r.hart.link, r.hart.link.read()) & DEVICE_STATUS.loopCurrentFixed).toBeTruthy();
    expect(ask(45, CMD45_TRIM_ZERO.encodeRequest({ currentMa: r.readLoopCurrent() })).responseCode).toBe(0);
    expect(ask(45, CMD45_TRIM_ZERO.encodeRequest({ currentMa: 5.5 })).responseCode).toBe(3);
    ask(40, CMD40_FIXED_CURRENT.encodeRequest({ currentMa: 20 }));
    expect(ask(46, CMD46_TRIM_GAIN.encodeRequest({ currentMa: r.readLoopCurrent() })).responseCode).toBe(0);
    for (const level of [4, 12, 20]) {
      ask(40, CMD40_FIXED_CURRENT.encodeRequest({ currentMa: level }));
      expect(Math.abs(r.readLoopCurrent() - level)).toBeLessThan(0.002);
    }
    expect(ask(40, CMD40_FIXED_CURRENT.encodeRequest({ currentMa: 0 })).responseCode).toBe(0);
    expect(r.snapshot().hart.trim.fixedMa).toBeNull();
    expect(r.hart.state.configChanged).toBe(true);
  });

  it('zero trim (43) takes the sensed zero error out of the PV and the loop, within 10 % of span only', () => {
    const { r, ask } = rig({ zeroErrorPct: 0.8 });
    r.apply({ setpoint: { value: 0 } });
    expect(r.readLoopCurrent()).toBeCloseTo(4 + 0.128, 4);
    expect(ask(43).responseCode).toBe(0);
    expect(CMD1_PV.decodeResponse(ask(1).data)?.value).toBeCloseTo(0, 4);
    expect(r.readLoopCurrent()).toBeCloseTo(4, 4);
    r.apply({ setpoint: { value: 30 } });
    for (let i = 0; i < 100; i += 1) r.snapshot();
    expect(ask(43).responseCode).toBe(9); // applied process too high
  });

  it('refuses writes under write protect, fixed current in multidrop, and unknown commands', () => {
    const { r, ask } = rig();
    r.apply({ hart: { writeProtect: true } });
    expect(ask(43).responseCode).toBe(7);
    expect(CMD15_INFO.decodeResponse(ask(15).data)?.writeProtect).toBe(1);
    r.apply({ hart: { writeProtect: false, pollingAddress: 3 } });
    expect(ask(40, CMD40_FIXED_CURRENT.encodeRequest({ currentMa: 12 })).responseCode).toBe(11);
    expect(ask(82).responseCode).toBe(64);
    expect(ask(40, new Uint8Array(2)).responseCode).toBe(5);
  });

  it('reports the PV and the range in the device’s own unit code', () => {
    const { r, ask } = rig();
    r.apply({ setpoint: { value: 40 }, hart: { unitCode: 12 } }); // 12: kPa (common table 2, from memory)
    r.snapshot();
    const info = CMD15_INFO.decodeResponse(ask(15).data);
    expect(info?.rangeUnitCode).toBe(12);
    expect(info?.urv).toBeCloseTo(convertPressure(100, 'inH2O@68F', 'kPa'), 4);
    expect(CMD1_PV.decodeResponse(ask(1).data)).toMatchObject({ unitCode: 12 });
    expect(CMD1_PV.decodeResponse(ask(1).data)?.value).toBeCloseTo(convertPressure(40, 'inH2O@68F', 'kPa'), 3);
  });

  it('reports a square-root transfer function and the damping from the transmitter model', () => {
    const { ask } = rig({ outputMode: 'sqrt-transmitter', dampingS: 0.4, lrv: 0, urv: 250 });
    expect(CMD15_INFO.decodeResponse(ask(15).data)).toMatchObject({ transferFunction: 1, urv: 250, lrv: 0 });
    expect(CMD15_INFO.decodeResponse(ask(15).data)?.damping).toBeCloseTo(0.4, 6);
  });
});
